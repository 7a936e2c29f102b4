/**
 * The values of the round model: the inputs the store gives (results, ropes, plans, notes) and
 * the site round built from them (barns, pens, per-assay results, tallies, sources). Types only.
 */
import type { Measure } from '../config/types.js';
import type { ResultClass } from '../interpret/classify.js';
import type { DatedRope, RoundState } from './rounds.js';
import type { GroupRef } from './pigGroups.js';

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
