/**
 * The rows a file carries once mapped (a lab result, a rope hung in a pen) and the rows the store
 * gives back: the shapes ingest, the store and the analysis share. Types only.
 */
import type { CallClass, Measure, ReportStatusKind } from '../config/types.js';
import type { ResultClass } from '../interpret/classify.js';

/** How one report came to replace another (the supersession rule names it). */
export type SupersessionKind =
  | 'correction'
  | 'correction-kept'
  | 'final-over-preliminary'
  | 'preliminary-after-final'
  | 'later-report'
  | 'earlier-report-kept'
  | 'same-date-later-file';

export interface RopeLocation {
  siteId: string;
  barnId: string;
  penId: string;
  hungOn: string;
}

export interface ResultRow {
  line: number;
  labId: string;
  sampleId: string;
  assayId: string;
  labAssay: string;
  /** What the result cell holds: a Ct or an S/P ratio (the assay's measure). */
  measure: Measure;
  /** The Ct of a detected PCR result; null otherwise (and always for an S/P assay). */
  ct: number | null;
  /** The S/P ratio of an antibody result; null otherwise (and always for a Ct assay). */
  sp: number | null;
  /** The result cell (Ct or S/P) as the lab wrote it. */
  ctRaw: string;
  labCall: string | null;
  accession: string | null;
  collectedOn: string | null;
  reportedOn: string | null;
  reportStatus: string | null;
  control: string | null;
  resultClass: ResultClass;
  reason: string;
  loadBand: string | null;
  /** The lab's Ct cutoffs this row was read with; null for an S/P assay. */
  positiveBelow: number | null;
  suspectBelow: number | null;
  cycleLimit: number | null;
  /** The lab's S/P cutoffs this row was read with; null for a Ct assay (suspect: also without a suspect band). */
  positiveAtOrAbove: number | null;
  suspectAtOrAbove: number | null;
  /** The lab marked this row as a corrected or reissued report (statusKind is corrected). */
  markedReissue: boolean;
  /** The state of the report, from the lab's status words in its status columns; null when none is found. */
  statusKind: ReportStatusKind | null;
  /** The status word found (as configured), for the receipt. */
  statusWord: string | null;
  /** The class the lab's own call names (its call words), null when the call names none. */
  labCallClass: CallClass | null;
  /** The lab's own call disagrees with the class from the cutoffs (kept for review). */
  callDiffers: boolean;
  /** The sample ID as the file wrote it, when a confirmed correction (config/corrections.yaml) replaced it. */
  sampleIdAsWritten: string | null;
  /** Identifies what the lab reported for this sample, assay and lab (see contentKey). */
  contentKey: number;
  /** Location carried by the sample ID itself (site sample pattern). */
  encodedRope: RopeLocation | undefined;
}

export interface RopeRow extends RopeLocation {
  line: number;
  sampleId: string;
  note: string | null;
  /** The sample ID as the sheet wrote it, when a confirmed correction (config/corrections.yaml) replaced it. */
  sampleIdAsWritten: string | null;
  /** A warning that did not stop the row (e.g. a rope in a pen the layout lists as empty). */
  warning: string | undefined;
  /**
   * The pool the rope was tested in (normalised), or null: ropes sharing a pool ID went into one
   * PCR, and the lab reports the pool's result under that ID.
   */
  poolId?: string | null;
}

/** Rows of one batch, read by index (a plain array, or columns decoded on demand). */
export interface RowList<T> {
  readonly length: number;
  at(index: number): T | undefined;
}

export interface StoredFile {
  id: number;
  name: string;
  sha256: string;
  kind: 'results' | 'ropes' | 'unknown';
  labId: string | null;
  receivedAt: string;
  status: 'accepted' | 'rejected';
  reasonCode: string | null;
  reason: string | null;
}

export interface StoredRope {
  sampleId: string;
  siteId: string;
  barnId: string;
  penId: string;
  hungOn: string;
  source: 'sheet' | 'sample-pattern' | 'plan';
  /** The pool the rope was tested in (its results come under this ID); null when tested on its own. */
  poolId?: string | null;
}

/** A current result as the analysis reads it: the stored row's fields plus its ids. */
export type StoredResult = Pick<
  ResultRow,
  | 'labId'
  | 'sampleId'
  | 'assayId'
  | 'measure'
  | 'ct'
  | 'sp'
  | 'ctRaw'
  | 'labCall'
  | 'accession'
  | 'collectedOn'
  | 'reportedOn'
  | 'resultClass'
  | 'reason'
  | 'loadBand'
  | 'positiveBelow'
  | 'suspectBelow'
  | 'cycleLimit'
  | 'positiveAtOrAbove'
  | 'suspectAtOrAbove'
  | 'callDiffers'
> & { id: number; fileId: number };

export interface PlannedRope {
  sampleId: string;
  siteId: string;
  barnId: string;
  penId: string;
  side: string;
  reason: string;
  dueOn: string;
  plannedAt: string;
  afterRound: number;
  /** The pool the plan puts the rope in (pooled testing), or null. */
  poolId?: string | null;
}

export interface Supersession {
  oldResultId: number;
  newResultId: number;
  reason: string;
}

/** One report of a link between two, as the pages and summary.csv name it. */
export interface StoredReading {
  resultClass: ResultClass;
  ct: number | null;
  /** The Ct cell as the lab wrote it ('' for a blank). */
  ctRaw: string;
  labCall: string | null;
  reportedOn: string | null;
  status: ReportStatusKind | null;
  /** The lab's word for the report's state: the status word found, else the report-status cell. */
  statusWord: string | null;
}

/** A report of a site's sample that another took the place of (view supersession_readings). */
export interface ReplacedReport {
  sampleId: string;
  assayId: string;
  labId: string;
  /** Null for links stored before kinds were recorded. */
  kind: SupersessionKind | null;
  reason: string;
  replaced: StoredReading;
  inPlace: StoredReading;
}

/** A refused row whose sample ID failed its check character, with the planned ID it most likely meant. */
export interface MistypedRefusal {
  /** The sample ID cell as the file wrote it. */
  written: string;
  suggestedId: string;
  /** The file's name as received (its name in inbox/archive/, unless a file of that name was there). */
  fileName: string;
  line: number;
}

/** One report as a receipt names it. */
export interface ReportReading {
  resultClass: ResultClass;
  ctRaw: string;
  labCall: string | null;
  reportedOn: string | null;
  status: ReportStatusKind | null;
}

/** One string per place and day, to tell whether two ropes hang in the same place. */
export function locationKey(rope: RopeLocation): string {
  return `${rope.siteId}/${rope.barnId}/${rope.penId}/${rope.hungOn}`;
}
