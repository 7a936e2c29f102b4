/**
 * The round model: for one site, every round with its barns, pens and per-assay results. This
 * plain value is what statistics, spatial analysis, planning and reports all read. Pure.
 * Built in named steps: the site's results indexed by sample, its ropes formed into rounds
 * (rounds.ts), each barn's ropes read (barnReadings.ts) and assembled with its missing ropes
 * (roundAssembly.ts, missingRopes.ts); the values themselves are in roundTypes.ts.
 */
import type { Measure, Site } from '../config/types.js';
import type { ResultClass } from '../interpret/classify.js';
import { formRounds } from './rounds.js';
import { emptyRoundDraft, readBarnRopes, type SiteIndex } from './barnReadings.js';
import { plannedByRound } from './missingRopes.js';
import { groupBy } from './penOrder.js';
import { poolPensOf } from './penResults.js';
import { assembleBarnRound, assembleSiteRound } from './roundAssembly.js';
import type { PenRound, PlannedInput, ResultInput, RopeInput, RoundNotesInput, SiteRound } from './roundTypes.js';

export type {
  AssayTally,
  BarnPool,
  BarnRound,
  CallDisagreement,
  MistypedInput,
  MistypedRope,
  PenAssayResult,
  PenRound,
  PlannedInput,
  PoolReading,
  ReadingInput,
  ReplacedInput,
  ResultInput,
  ResultSource,
  RopeInput,
  RoundCutoff,
  RoundNotesInput,
  RoundReplacement,
  SiteRound,
} from './roundTypes.js';

/** The site's results and notes by sample ID (refusals by the planned ID they most likely meant). */
function indexSite(results: readonly ResultInput[], notes: RoundNotesInput): SiteIndex {
  const resultsBySample = new Map<string, ResultInput[]>();
  for (const result of results) {
    const list = resultsBySample.get(result.sampleId);
    if (list) list.push(result);
    else resultsBySample.set(result.sampleId, [result]);
  }
  return {
    resultsBySample,
    replacedBySample: groupBy(notes.replaced ?? [], (entry) => entry.sampleId),
    mistypedByMeant: groupBy(notes.mistyped ?? [], (entry) => entry.suggestedId),
  };
}

/** Where a build of some of a site's rounds starts: what it needs of the rounds before. */
export interface EarlierRounds {
  /** The first day and last day of each round before (a planned rope's due date may fall in one). */
  spans: readonly { startOn: string; endOn: string }[];
  /** The sample IDs of every rope of the site, before or not (a placed planned rope is not missing). */
  placed: ReadonlySet<string>;
}

/**
 * Builds every round of a site, or with `earlier` the rounds from the first of `ropes` on (the
 * ropes of those rounds only; each round is the same as in a build of the whole history).
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
  earlier?: EarlierRounds,
): SiteRound[] {
  const index = indexSite(results, notes);
  const siteRopes = ropes.filter((rope) => rope.siteId === site.id);
  const before = earlier?.spans ?? [];
  const rounds = formRounds(site.id, siteRopes, site.program.roundWindowDays, before.length);
  const plannedRounds = plannedByRound(
    site,
    earlier?.placed ?? new Set(siteRopes.map((rope) => rope.sampleId)),
    before.length === 0 ? rounds : [...before, ...rounds],
    plannedWithoutResults,
  );
  return rounds.map((round, roundIndex) => {
    const plannedHere = plannedRounds.get(String(before.length + roundIndex)) ?? [];
    const draft = emptyRoundDraft(poolPensOf(round.ropes));
    const ropesByBarn = groupBy(round.ropes, (rope) => rope.barnId);
    const barns = site.barns.map((barn) => {
      const barnRopes = ropesByBarn.get(barn.id) ?? [];
      const barnDraft = readBarnRopes(barn, barnRopes, index, draft);
      return assembleBarnRound(barn, barnRopes, barnDraft, round.startOn, plannedHere, index, draft);
    });
    return assembleSiteRound(site, round, barns, draft, today);
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
  return barnCtHistory(rounds, barnId)(penId, assayId);
}

/**
 * ctHistory for any pen of one barn: `(penId, assayId)` gives ctHistory(rounds, barnId, penId,
 * assayId). The barn's pens of each round are indexed at the first call (the first pen of an id,
 * as a search in order finds; a kept model's pens are parsed only then), so a history costs one
 * look-up per round rather than a search of the barn.
 */
export function barnCtHistory(
  rounds: readonly SiteRound[],
  barnId: string,
): (penId: string, assayId: string) => CtHistoryPoint[] {
  let pensOfRounds: Map<string, PenRound>[] | undefined;
  const indexPens = () =>
    rounds.map((round) => {
      const pens = new Map<string, PenRound>();
      for (const pen of round.barns.find((barn) => barn.barnId === barnId)?.pens ?? [])
        if (!pens.has(pen.penId)) pens.set(pen.penId, pen);
      return pens;
    });
  return (penId, assayId) => {
    const pensOf = (pensOfRounds ??= indexPens());
    const points: CtHistoryPoint[] = [];
    rounds.forEach((round, index) => {
      const result = pensOf[index]!.get(penId)?.results[assayId];
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
    });
    return points;
  };
}
