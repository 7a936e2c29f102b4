/**
 * What a mapped record becomes: a lab result row, a rope row, or a refusal. Types only, shared by
 * the record mappers, the batches that carry them and the store.
 */
import type { CallClass, Measure, ReportStatusKind } from '../config/types.js';
import type { ResultClass } from '../interpret/classify.js';
import type { RowRejection } from './errors.js';

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

export type RowOutcome<T> = { ok: true; row: T } | { ok: false; rejection: RowRejection };
