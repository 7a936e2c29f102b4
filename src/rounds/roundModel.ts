/**
 * The round model: for one site, every round with its barns, pens and per-assay results. This
 * plain value is what statistics, spatial analysis, planning and reports all read. Pure.
 */
import type { Barn, Measure, Site } from '../config/types.js';
import { CLASS_SEVERITY, type ResultClass } from '../interpret/classify.js';
import { formRounds, resultsDueOn, roundForDueDate, roundState, type DatedRope, type RoundState } from './rounds.js';
import { barnStatusOn, groupRef, type GroupRef } from './pigGroups.js';
import { inUsePens } from '../domain/layout.js';
import { loadScore } from '../interpret/load.js';

export interface ResultInput {
  id: number;
  labId: string;
  sampleId: string;
  assayId: string;
  /** Ct (the default) or S/P ratio: what `ct` or `sp` holds. */
  measure?: Measure;
  ct: number | null;
  /** The S/P ratio of an antibody result (measure sp-ratio). */
  sp?: number | null;
  resultClass: ResultClass;
  reason: string;
  loadBand: string | null;
  /** The lab's cycle limit; null for an S/P result. */
  cycleLimit: number | null;
  callDiffers: boolean;
  labCall: string | null;
  /** The lab's cutoffs this result was read with (stored per row); absent in older callers, null for the other measure. */
  positiveBelow?: number | null;
  suspectBelow?: number | null;
  positiveAtOrAbove?: number | null;
  suspectAtOrAbove?: number | null;
  /** The result cell (Ct or S/P) as the lab wrote it. */
  ctRaw?: string;
  /** The lab's case number (accession) and the dates on its report. */
  accession?: string | null;
  collectedOn?: string | null;
  reportedOn?: string | null;
}

export interface PenAssayResult {
  assayId: string;
  /** `ct` (PCR, lower = more nucleic acid) or `sp-ratio` (antibody ELISA, higher = more antibody). */
  measure: Measure;
  resultClass: ResultClass;
  ct: number | null;
  /** The S/P ratio of an antibody result; null for a Ct result. */
  sp: number | null;
  loadBand: string | null;
  /** L = max(0, cycle limit - Ct); 0 when not detected (load score: common practice, no source). For an S/P: max(0, S/P). */
  load: number;
  reason: string;
  sampleId: string;
  labId: string;
  labCall: string | null;
  callDiffers: boolean;
  /** The result cell (Ct or S/P) as the lab wrote it (null when not known). */
  ctRaw: string | null;
  /** The cutoffs of the lab that reported this result, as stored with it (null when not known or of the other measure). */
  positiveBelow: number | null;
  suspectBelow: number | null;
  cycleLimit: number | null;
  positiveAtOrAbove: number | null;
  suspectAtOrAbove: number | null;
  /** The lab's case number (accession), collection and report dates, as on the lab's report. */
  accession: string | null;
  collectedOn: string | null;
  reportedOn: string | null;
  /** Other results for this pen and assay in the round (a second rope), worst one shown above. */
  otherSampleIds: string[];
  /**
   * Set when the result is a pool's (the pen's rope was tested with others in one PCR): the
   * pool's ID and whether it was positive. A positive pool says that at least one of its pens
   * is infected, not which: its pens read "positive pool" (class suspect, retested one by one),
   * never positive. Absent for a rope tested on its own.
   */
  pool?: PoolReading;
}

/** The pool a pen's result came from. */
export interface PoolReading {
  poolId: string;
  /** The pool's own class (a positive pool's pens are held as suspect, see PenAssayResult.pool). */
  poolClass: ResultClass;
  /** The pens (barn/pen) whose ropes were in the pool, in this round. */
  pens: string[];
}

/** A pool of a barn's ropes tested in one PCR, as it stands for the barn's pens for one assay. */
export interface BarnPool {
  poolId: string;
  poolClass: ResultClass;
  /** The barn's pens whose result for the assay is this pool's (the pool may hold other barns' ropes too). */
  pens: string[];
}

export interface PenRound {
  penId: string;
  rowLabel: string;
  position: number;
  sampleIds: string[];
  /** Some result came back for a rope in this pen. */
  returned: boolean;
  results: Record<string, PenAssayResult>;
}

export interface AssayTally {
  positive: number;
  suspect: number;
  negative: number;
  invalid: number;
  positivePens: string[];
  suspectPens: string[];
  invalidPens: string[];
  /** Pens with a valid result for this assay (positive, suspect or negative). */
  testedPens: string[];
  /**
   * Only when some pen's result for this assay is a pool's: the pools, and the pens of a positive
   * pool ("positive pool": counted as suspect above, each retested in the next plan). Absent in
   * a round without pools, so its outputs are as before.
   */
  pools?: BarnPool[];
  positivePoolPens?: string[];
}

export interface BarnRound {
  barnId: string;
  /** The day the barn's group is judged on: its first rope of the round, else the round's first day. */
  onDate: string;
  /** The group of pigs in the barn that day (null: the barn is not run by groups, or is empty). */
  group: GroupRef | null;
  /**
   * Empty that day: a group was closed out and the next not yet placed. Nothing to find, so no
   * rope planned for it is missing and the round proves nothing there (not a missed round).
   */
  empty: boolean;
  /** Pens in use: the survey population N. */
  pensInUse: number;
  /**
   * Ropes on sheets or plans: those placed in a pen of the layout, and the ropes planned for the
   * round (by due date) that no sheet or result placed and whose pen no other rope covered.
   * Always `ropesReturned` plus the missing (or, before the round is closed, the awaited) ropes.
   */
  ropesHung: number;
  ropesReturned: number;
  /** Ropes hung (or planned) with no result back, once the round is closed (`complete`); empty before. */
  missingSampleIds: string[];
  /** Of those, ropes planned for this round whose pen no other rope covered. */
  plannedMissing: string[];
  /** Before the round is closed: ropes out (hung or planned) whose results are not yet due. Empty once closed. */
  awaitingSampleIds: string[];
  /** The pen of each rope without a result (sample ID to pen), so that maps can mark it. */
  missingPens: Record<string, string>;
  /** Of the ropes without a result (missing or awaited), those for which a row came back under a mistyped sample ID and was refused. */
  mistyped: MistypedRope[];
  pens: PenRound[];
  byAssay: Record<string, AssayTally>;
  /** The lab reports behind this barn's results, one per lab and report date. */
  sources: ResultSource[];
}

/** One lab report (a lab and its report date) behind some results of a round. */
export interface ResultSource {
  labId: string;
  /** The report date on the lab's rows; null when the export had none. */
  reportedOn: string | null;
  /** The lab's case numbers (accessions) on those rows, sorted. */
  accessions: string[];
  assays: string[];
  /** Results of this report in the round (every rope, not only those standing for a pen). */
  results: number;
  /** First and last collection dates on the lab's rows (null when none was given). */
  collectedFrom: string | null;
  collectedTo: string | null;
}

/** The cutoffs one lab used for one assay in a round, as stored with its results (those of the assay's measure; null the others). */
export interface RoundCutoff {
  labId: string;
  assayId: string;
  measure: Measure;
  positiveBelow: number | null;
  suspectBelow: number | null;
  cycleLimit: number | null;
  positiveAtOrAbove: number | null;
  /** Null also for an S/P assay without a suspect band. */
  suspectAtOrAbove: number | null;
  results: number;
}

/** A result whose lab call names another class than the lab's cutoffs give for its Ct. */
export interface CallDisagreement {
  barnId: string;
  penId: string;
  sampleId: string;
  assayId: string;
  labId: string;
  accession: string | null;
  labCall: string;
  measure: Measure;
  ct: number | null;
  sp: number | null;
  ctRaw: string | null;
  resultClass: ResultClass;
  reason: string;
  /** This result stands for the pen (the worst of its ropes); false for a second rope. */
  standsForPen: boolean;
}

export interface SiteRound {
  siteId: string;
  number: number;
  id: string;
  startOn: string;
  endOn: string;
  /** Awaiting results, partial, or complete (closed): see RoundState. */
  state: RoundState;
  /** The last day results are awaited: the last rope date plus the program's `resultGraceDays`. */
  resultsDueOn: string;
  assays: string[];
  /** The measure of each assay of the round (Ct unless its results say S/P). */
  measures: Record<string, Measure>;
  barns: BarnRound[];
  /** Lab reports behind the round, by lab and report date, with the barns they cover. */
  sources: (ResultSource & { barnIds: string[] })[];
  /** Distinct cutoffs (lab, assay) the round's results were read with. */
  cutoffs: RoundCutoff[];
  /** Every result of the round whose lab call disagrees with its reading, in barn and pen order. */
  disagreements: CallDisagreement[];
  /** Every report of the round's ropes that another took the place of, in barn and pen order. */
  replaced: RoundReplacement[];
}

/** One report of a link between two reports of a sample, assay and lab (as stored). */
export interface ReadingInput {
  resultClass: ResultClass;
  ct: number | null;
  /** The Ct cell as the lab wrote it ('' for a blank). */
  ctRaw: string;
  labCall: string | null;
  reportedOn: string | null;
  /** preliminary, final or corrected, when the report said. */
  status: string | null;
  /** The lab's own word for the report's state. */
  statusWord: string | null;
}

/** A report that another took the place of: `replaced` is no longer current, `inPlace` took its place. */
export interface ReplacedInput {
  sampleId: string;
  assayId: string;
  labId: string;
  /** Why, as a code (correction, final-over-preliminary, later-report, ...); null when not recorded. */
  kind: string | null;
  reason: string;
  replaced: ReadingInput;
  inPlace: ReadingInput;
}

/** A replaced report of one of the round's ropes, with the pen the rope hangs in. */
export type RoundReplacement = ReplacedInput & { barnId: string; penId: string };

/** A refused row whose sample ID failed its check character, naming the planned ID it most likely meant. */
export interface MistypedInput {
  written: string;
  suggestedId: string;
  fileName: string;
  line: number;
}

/** A rope without a result for which a row came back under a mistyped ID: the result is refused, not lost. */
export interface MistypedRope {
  /** The rope's sample ID: the planned ID the refused rows most likely meant. */
  sampleId: string;
  penId: string;
  side: string;
  /** Each refused row: the ID as written, its file and line. */
  refusals: { written: string; fileName: string; line: number }[];
}

/** What the store holds beside current results that the round shows: replaced reports, refusals under a mistyped ID. */
export interface RoundNotesInput {
  replaced?: readonly ReplacedInput[];
  mistyped?: readonly MistypedInput[];
}

export interface RopeInput extends DatedRope {
  source: string;
  /** The pool the rope was tested in: its results are the pool ID's. */
  poolId?: string | null;
}

/**
 * A planned rope with no result: missing in the round it was planned for, unless its pen was
 * roped anyway. Its round is the one whose date window holds its due date (roundForDueDate).
 */
export interface PlannedInput {
  sampleId: string;
  barnId: string;
  penId: string;
  /** The date the plan gave it (yyyy-MM-dd). */
  dueOn: string;
}

/** A pen's index in its barn's layout order (pens are listed row by row along the alley). */
function layoutOrder(barn: Barn, penId: string): number {
  const pen = barn.penById.get(penId.toUpperCase())!;
  return pen.row * barn.layout.pensPerRow + pen.position;
}

/** A pen's layout order, or after every pen of the layout when the layout does not have it. */
function penOrder(barn: Barn, penId: string): number {
  return barn.penById.has(penId.toUpperCase()) ? layoutOrder(barn, penId) : Number.MAX_SAFE_INTEGER;
}

function groupBy<T>(items: readonly T[], key: (item: T) => string): Map<string, T[]> {
  const groups = new Map<string, T[]>();
  for (const item of items) {
    const list = groups.get(key(item));
    if (list) list.push(item);
    else groups.set(key(item), [item]);
  }
  return groups;
}

/** The earlier (or later) of two ISO dates, either of which may be missing. */
const earliest = (a: string | null, b: string | null | undefined): string | null =>
  b === null || b === undefined ? a : a === null || b < a ? b : a;
const latest = (a: string | null, b: string | null | undefined): string | null =>
  b === null || b === undefined ? a : a === null || b > a ? b : a;
const compareText = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

const sourceKey = (labId: string, reportedOn: string | null) => `${labId}\u0000${reportedOn ?? ''}`;

/** A source being gathered: sets, so that a report with many case numbers stays linear. */
interface SourceDraft {
  labId: string;
  reportedOn: string | null;
  accessions: Set<string>;
  assays: Set<string>;
  results: number;
  collectedFrom: string | null;
  collectedTo: string | null;
  barnIds: string[];
}

/** Adds one result (or a barn's gathered source) to the sources, keyed by lab and report date. */
function addSource(
  sources: Map<string, SourceDraft>,
  entry: {
    labId: string;
    reportedOn: string | null;
    accessions: Iterable<string>;
    assays: Iterable<string>;
    results: number;
    collectedFrom: string | null;
    collectedTo: string | null;
  },
  barnId?: string,
): void {
  const key = sourceKey(entry.labId, entry.reportedOn);
  let source = sources.get(key);
  if (!source) {
    source = {
      labId: entry.labId,
      reportedOn: entry.reportedOn,
      accessions: new Set(),
      assays: new Set(),
      results: 0,
      collectedFrom: null,
      collectedTo: null,
      barnIds: [],
    };
    sources.set(key, source);
  }
  for (const accession of entry.accessions) source.accessions.add(accession);
  for (const assay of entry.assays) source.assays.add(assay);
  source.results += entry.results;
  source.collectedFrom = earliest(source.collectedFrom, entry.collectedFrom);
  source.collectedTo = latest(source.collectedTo, entry.collectedTo);
  if (barnId !== undefined && !source.barnIds.includes(barnId)) source.barnIds.push(barnId);
}

/** One result as a source entry. */
function resultEntry(result: ResultInput) {
  const collectedOn = result.collectedOn ?? null;
  return {
    labId: result.labId,
    reportedOn: result.reportedOn ?? null,
    accessions: result.accession === null || result.accession === undefined ? [] : [result.accession],
    assays: [result.assayId],
    results: 1,
    collectedFrom: collectedOn,
    collectedTo: collectedOn,
  };
}

/** The gathered sources in lab and report-date order, case numbers and assays sorted. */
function sortedSources(sources: Map<string, SourceDraft>): (ResultSource & { barnIds: string[] })[] {
  return [...sources.values()]
    .map((source) => ({
      ...source,
      accessions: [...source.accessions].sort(compareText),
      assays: [...source.assays].sort(compareText),
    }))
    .sort((a, b) => compareText(a.labId, b.labId) || compareText(a.reportedOn ?? '', b.reportedOn ?? ''));
}

function emptyTally(): AssayTally {
  return {
    positive: 0,
    suspect: 0,
    negative: 0,
    invalid: 0,
    positivePens: [],
    suspectPens: [],
    invalidPens: [],
    testedPens: [],
  };
}

const known = (value: number | null | undefined): value is number => value !== null && value !== undefined;

/** The cutoffs a result was read with, when stored with it (older callers give none). */
function roundCutoffOf(result: ResultInput): Omit<RoundCutoff, 'results'> | undefined {
  const measure = result.measure ?? 'ct';
  if (measure === 'sp-ratio') {
    if (!known(result.positiveAtOrAbove)) return undefined;
    return {
      labId: result.labId,
      assayId: result.assayId,
      measure,
      positiveBelow: null,
      suspectBelow: null,
      cycleLimit: null,
      positiveAtOrAbove: result.positiveAtOrAbove,
      suspectAtOrAbove: result.suspectAtOrAbove ?? null,
    };
  }
  if (!known(result.positiveBelow) || !known(result.suspectBelow)) return undefined;
  return {
    labId: result.labId,
    assayId: result.assayId,
    measure,
    positiveBelow: result.positiveBelow,
    suspectBelow: result.suspectBelow,
    cycleLimit: result.cycleLimit,
    positiveAtOrAbove: null,
    suspectAtOrAbove: null,
  };
}

/**
 * Of two results of one class, the one that stands for the pen: the lower Ct (more nucleic
 * acid), or the higher S/P (more antibody).
 */
function strongerWithinClass(candidate: PenAssayResult, existing: PenAssayResult): boolean {
  if (candidate.measure === 'sp-ratio') return (candidate.sp ?? -Infinity) > (existing.sp ?? -Infinity);
  return (candidate.ct ?? Infinity) < (existing.ct ?? Infinity);
}

/**
 * Builds every round of a site.
 * @param ropes the site's ropes with locations (sheets, sample patterns, returned planned ropes)
 * @param results current (not superseded) results, any site; those whose sample is not a rope here are ignored
 * @param today the clock's date (yyyy-MM-dd): a round whose results are not yet due awaits them
 *   and has no missing ropes; without it every round is judged closed
 */
export function buildSiteRounds(
  site: Site,
  ropes: readonly RopeInput[],
  results: readonly ResultInput[],
  plannedWithoutResults: readonly PlannedInput[] = [],
  notes: RoundNotesInput = {},
  today?: string,
): SiteRound[] {
  const resultsBySample = new Map<string, ResultInput[]>();
  for (const result of results) {
    const list = resultsBySample.get(result.sampleId);
    if (list) list.push(result);
    else resultsBySample.set(result.sampleId, [result]);
  }
  const replacedBySample = groupBy(notes.replaced ?? [], (entry) => entry.sampleId);
  const mistypedByMeant = groupBy(notes.mistyped ?? [], (entry) => entry.suggestedId);
  const siteRopes = ropes.filter((rope) => rope.siteId === site.id);
  const rounds = formRounds(site.id, siteRopes, site.program.roundWindowDays);
  // A planned rope that a sheet or a result placed is a rope of its own round already.
  const placed = new Set(siteRopes.map((rope) => rope.sampleId));
  const plannedByRound = groupBy(
    plannedWithoutResults.filter((rope) => !placed.has(rope.sampleId)),
    (rope) => String(roundForDueDate(rope.dueOn, rounds, site.program.roundWindowDays)),
  );
  return rounds.map((round, roundIndex) => {
    const plannedHere = plannedByRound.get(String(roundIndex)) ?? [];
    // Pools of the round: which pens each pool ID covers (a pool's result applies to every rope in it).
    const poolPens = new Map<string, string[]>();
    for (const rope of round.ropes) {
      if (rope.poolId === undefined || rope.poolId === null) continue;
      const pens = poolPens.get(rope.poolId);
      const pen = `${rope.barnId}/${rope.penId}`;
      if (pens === undefined) poolPens.set(rope.poolId, [pen]);
      else if (!pens.includes(pen)) pens.push(pen);
    }
    const assays = new Set<string>();
    const measures: Record<string, Measure> = {};
    const cutoffs = new Map<string, RoundCutoff>();
    const disagreements: CallDisagreement[] = [];
    const replaced: RoundReplacement[] = [];
    const barns: BarnRound[] = site.barns.map((barn) => {
      const barnRopes = round.ropes.filter((rope) => rope.barnId === barn.id);
      const pens = new Map<string, PenRound>();
      const barnSources = new Map<string, SourceDraft>();
      const barnDisagreements: CallDisagreement[] = [];
      const missing: string[] = [];
      /** The pen of each rope without a result (sample ID -> pen id as the layout writes it). */
      const missingPen = new Map<string, string>();
      const barnReplaced: RoundReplacement[] = [];
      /** A pool's results are counted once per barn in its sources, cutoffs and disagreements, however many pens they stand for. */
      const poolResultsSeen = new Set<number>();
      let returned = 0;
      let hung = 0;
      for (const rope of barnRopes) {
        const pen = barn.penById.get(rope.penId.toUpperCase());
        if (!pen) continue;
        hung++;
        let penRound = pens.get(pen.id);
        if (!penRound) {
          penRound = {
            penId: pen.id,
            rowLabel: pen.rowLabel,
            position: pen.position,
            sampleIds: [],
            returned: false,
            results: {},
          };
          pens.set(pen.id, penRound);
        }
        penRound.sampleIds.push(rope.sampleId);
        for (const entry of replacedBySample.get(rope.sampleId) ?? [])
          barnReplaced.push({ ...entry, barnId: barn.id, penId: pen.id });
        const ownResults = resultsBySample.get(rope.sampleId) ?? [];
        const poolId = rope.poolId ?? null;
        const pooledResults = poolId === null ? [] : (resultsBySample.get(poolId) ?? []);
        const ropeResults = pooledResults.length === 0 ? ownResults : [...ownResults, ...pooledResults];
        if (ropeResults.length === 0) {
          missing.push(rope.sampleId);
          missingPen.set(rope.sampleId, pen.id);
          continue;
        }
        returned++;
        penRound.returned = true;
        for (const result of ropeResults) {
          assays.add(result.assayId);
          const measure = result.measure ?? 'ct';
          if (measures[result.assayId] === undefined || measure === 'sp-ratio') measures[result.assayId] = measure;
          const fromPool = poolId !== null && result.sampleId === poolId;
          const firstReading = !fromPool || !poolResultsSeen.has(result.id);
          if (fromPool) poolResultsSeen.add(result.id);
          if (firstReading) addSource(barnSources, resultEntry(result));
          const readWith = firstReading ? roundCutoffOf(result) : undefined;
          if (readWith !== undefined) {
            const key = [
              readWith.labId,
              readWith.assayId,
              readWith.measure,
              readWith.positiveBelow,
              readWith.suspectBelow,
              readWith.cycleLimit,
              readWith.positiveAtOrAbove,
              readWith.suspectAtOrAbove,
            ].join('\u0000');
            const cutoff = cutoffs.get(key);
            if (cutoff) cutoff.results++;
            else cutoffs.set(key, { ...readWith, results: 1 });
          }
          if (firstReading && result.callDiffers && result.labCall !== null) {
            barnDisagreements.push({
              barnId: barn.id,
              penId: pen.id,
              sampleId: result.sampleId,
              assayId: result.assayId,
              labId: result.labId,
              accession: result.accession ?? null,
              labCall: result.labCall,
              measure,
              ct: result.ct,
              sp: result.sp ?? null,
              ctRaw: result.ctRaw ?? null,
              resultClass: result.resultClass,
              reason: result.reason,
              standsForPen: false,
            });
          }
          const sp = result.sp ?? null;
          const candidate: PenAssayResult = {
            assayId: result.assayId,
            measure,
            resultClass: result.resultClass,
            ct: result.ct,
            sp,
            loadBand: result.loadBand,
            load: loadScore({
              measure,
              ct: result.ct,
              sp,
              cycleLimit: result.cycleLimit,
              invalid: result.resultClass === 'invalid',
            }),
            reason: result.reason,
            sampleId: result.sampleId,
            labId: result.labId,
            labCall: result.labCall,
            callDiffers: result.callDiffers,
            ctRaw: result.ctRaw ?? null,
            positiveBelow: result.positiveBelow ?? null,
            suspectBelow: result.suspectBelow ?? null,
            cycleLimit: result.cycleLimit,
            positiveAtOrAbove: result.positiveAtOrAbove ?? null,
            suspectAtOrAbove: result.suspectAtOrAbove ?? null,
            accession: result.accession ?? null,
            collectedOn: result.collectedOn ?? null,
            reportedOn: result.reportedOn ?? null,
            otherSampleIds: [],
          };
          if (fromPool) {
            candidate.pool = { poolId, poolClass: result.resultClass, pens: poolPens.get(poolId) ?? [] };
            // A positive pool says one or more of its pens is infected, not which: each of its pens
            // is held for a retest on its own (suspect), never counted as a positive pen.
            if (result.resultClass === 'positive') {
              candidate.resultClass = 'suspect';
              candidate.reason = `positive pool ${poolId} (${result.reason}): at least one of its ${candidate.pool.pens.length} pens is infected, not necessarily this one; retest the pen on its own`;
            }
          }
          const existing = penRound.results[result.assayId];
          if (!existing) penRound.results[result.assayId] = candidate;
          else {
            // Worst class first; among equals the lower Ct (more nucleic acid), or the higher S/P
            // (more antibody), stands for the pen.
            const worse =
              CLASS_SEVERITY[candidate.resultClass] > CLASS_SEVERITY[existing.resultClass] ||
              (candidate.resultClass === existing.resultClass && strongerWithinClass(candidate, existing));
            const kept = worse ? candidate : existing;
            const other = worse ? existing : candidate;
            kept.otherSampleIds = [...existing.otherSampleIds, other.sampleId];
            penRound.results[result.assayId] = kept;
          }
        }
      }
      const onDate = barnRopes.reduce(
        (first, rope) => (rope.hungOn < first ? rope.hungOn : first),
        barnRopes[0]?.hungOn ?? round.startOn,
      );
      const status = barnStatusOn(barn.groups, onDate);
      const plannedMissingRopes =
        status.kind === 'empty'
          ? []
          : plannedHere.filter(
              (rope) =>
                rope.barnId === barn.id &&
                !pens.get(barn.penById.get(rope.penId.toUpperCase())?.id ?? rope.penId)?.returned,
            );
      const plannedMissing = plannedMissingRopes.map((rope) => rope.sampleId);
      for (const rope of plannedMissingRopes)
        missingPen.set(rope.sampleId, barn.penById.get(rope.penId.toUpperCase())?.id ?? rope.penId);
      missing.push(...plannedMissing);
      // A rope without a result whose planned ID a refused row most likely meant: its result came
      // back under a mistyped ID (ISO/IEC 7064 check character) and waits for a person to confirm it.
      const mistyped: MistypedRope[] = [...new Set(missing)]
        .filter((sampleId) => mistypedByMeant.has(sampleId))
        .map((sampleId) => {
          const penId = missingPen.get(sampleId)!;
          return {
            sampleId,
            penId,
            side: barn.penById.get(penId.toUpperCase())?.rowLabel ?? '',
            refusals: mistypedByMeant
              .get(sampleId)!
              .map(({ written, fileName, line }) => ({ written, fileName, line })),
          };
        })
        .sort((a, b) => penOrder(barn, a.penId) - penOrder(barn, b.penId) || compareText(a.sampleId, b.sampleId));
      // Layout order (row, then position along the alley), as the barn's pens are listed.
      const penList = [...pens.values()].sort((a, b) => layoutOrder(barn, a.penId) - layoutOrder(barn, b.penId));
      const byAssay: Record<string, AssayTally> = {};
      for (const pen of penList) {
        for (const result of Object.values(pen.results)) {
          const tally = (byAssay[result.assayId] ??= emptyTally());
          tally[result.resultClass]++;
          if (result.resultClass === 'positive') tally.positivePens.push(pen.penId);
          if (result.resultClass === 'suspect') tally.suspectPens.push(pen.penId);
          if (result.resultClass === 'invalid') tally.invalidPens.push(pen.penId);
          else tally.testedPens.push(pen.penId);
          const pool = result.pool;
          if (pool !== undefined) {
            const pools = (tally.pools ??= []);
            const entry = pools.find((candidate) => candidate.poolId === pool.poolId);
            if (entry) entry.pens.push(pen.penId);
            else pools.push({ poolId: pool.poolId, poolClass: pool.poolClass, pens: [pen.penId] });
            tally.positivePoolPens ??= [];
            if (pool.poolClass === 'positive') tally.positivePoolPens.push(pen.penId);
          }
        }
      }
      // Pen order of the barn's layout, then sample and assay: every disagreeing result is listed.
      barnDisagreements.sort(
        (a, b) =>
          layoutOrder(barn, a.penId) - layoutOrder(barn, b.penId) ||
          compareText(a.sampleId, b.sampleId) ||
          compareText(a.assayId, b.assayId),
      );
      for (const entry of barnDisagreements)
        entry.standsForPen = pens.get(entry.penId)?.results[entry.assayId]?.sampleId === entry.sampleId;
      disagreements.push(...barnDisagreements);
      // Pen order of the layout, then sample and assay; links of one report in the order made.
      replaced.push(
        ...barnReplaced
          .map((entry, order) => ({ entry, order }))
          .sort(
            (a, b) =>
              layoutOrder(barn, a.entry.penId) - layoutOrder(barn, b.entry.penId) ||
              compareText(a.entry.sampleId, b.entry.sampleId) ||
              compareText(a.entry.assayId, b.entry.assayId) ||
              a.order - b.order,
          )
          .map(({ entry }) => entry),
      );
      return {
        barnId: barn.id,
        onDate,
        group: status.kind === 'group' ? groupRef(status.group) : null,
        empty: status.kind === 'empty',
        pensInUse: inUsePens(barn.pens).length,
        ropesHung: hung + plannedMissing.length,
        ropesReturned: returned,
        missingSampleIds: missing.sort(),
        plannedMissing: plannedMissing.sort(),
        awaitingSampleIds: [],
        missingPens: Object.fromEntries(
          [...missingPen.entries()]
            .filter(([sampleId]) => missing.includes(sampleId))
            .sort((a, b) => compareText(a[0], b[0])),
        ),
        mistyped,
        pens: penList,
        byAssay,
        // A barn's sources cover that barn only.
        sources: sortedSources(barnSources).map(({ barnIds: _barns, ...source }) => source),
      };
    });
    const dueOn = resultsDueOn(round.endOn, site.program.resultGraceDays);
    const state = roundState(
      barns.reduce((sum, barn) => sum + barn.ropesHung, 0),
      barns.reduce((sum, barn) => sum + barn.ropesReturned, 0),
      dueOn,
      today,
    );
    // Before the round is closed a rope without a result is awaited, not missing.
    if (state !== 'complete') {
      for (const barn of barns) {
        barn.awaitingSampleIds = barn.missingSampleIds;
        barn.missingSampleIds = [];
        barn.plannedMissing = [];
      }
    }
    const assayList = [...assays].sort();
    for (const barn of barns) for (const assay of assayList) barn.byAssay[assay] ??= emptyTally();
    const sources = new Map<string, SourceDraft>();
    for (const barn of barns) for (const source of barn.sources) addSource(sources, source, barn.barnId);
    return {
      siteId: site.id,
      number: round.number,
      id: round.id,
      startOn: round.startOn,
      endOn: round.endOn,
      state,
      resultsDueOn: dueOn,
      assays: assayList,
      measures: Object.fromEntries(assayList.map((assayId) => [assayId, measures[assayId] ?? 'ct'])),
      barns,
      sources: sortedSources(sources),
      cutoffs: [...cutoffs.values()].sort(
        (a, b) =>
          compareText(a.labId, b.labId) ||
          compareText(a.assayId, b.assayId) ||
          (a.positiveBelow ?? 0) - (b.positiveBelow ?? 0) ||
          (a.cycleLimit ?? 0) - (b.cycleLimit ?? 0) ||
          (a.positiveAtOrAbove ?? 0) - (b.positiveAtOrAbove ?? 0) ||
          (a.suspectAtOrAbove ?? 0) - (b.suspectAtOrAbove ?? 0),
      ),
      disagreements,
      replaced,
    };
  });
}

export interface CtHistoryPoint {
  round: number;
  roundId: string;
  startOn: string;
  resultClass: ResultClass;
  measure: Measure;
  ct: number | null;
  /** The S/P ratio (an antibody result); null for a Ct result. */
  sp: number | null;
  /** The lab that reported it, and that lab's positive cutoff and cycle limit for the assay (S/P: its positive cutoff). */
  labId: string;
  positiveBelow: number | null;
  cycleLimit: number | null;
  positiveAtOrAbove: number | null;
}

/** Per pen and assay, the Ct (or S/P) across rounds (only rounds where the pen had a result). */
export function ctHistory(
  rounds: readonly SiteRound[],
  barnId: string,
  penId: string,
  assayId: string,
): CtHistoryPoint[] {
  const points: CtHistoryPoint[] = [];
  for (const round of rounds) {
    const pen = round.barns.find((barn) => barn.barnId === barnId)?.pens.find((candidate) => candidate.penId === penId);
    const result = pen?.results[assayId];
    if (result) {
      points.push({
        round: round.number,
        roundId: round.id,
        startOn: round.startOn,
        resultClass: result.resultClass,
        measure: result.measure,
        ct: result.ct,
        sp: result.sp,
        labId: result.labId,
        positiveBelow: result.positiveBelow,
        cycleLimit: result.cycleLimit,
        positiveAtOrAbove: result.positiveAtOrAbove,
      });
    }
  }
  return points;
}
