/**
 * What a file's receipt says: the shape, and an empty one to start from. Kept apart from the
 * ingest itself so that code which only names receipts (the inbox's refusals of special files,
 * the CLI's declarations) does not load the ingest.
 */
import type { CallDisagreement, IdCorrectionNote, InvalidNote, SupersessionNote } from '../domain/store.js';
import type { RejectionCode, RowRejection } from './errors.js';

export interface Receipt {
  file: string;
  sha256: string;
  receivedAt: string;
  status: 'accepted' | 'rejected' | 'duplicate';
  kind: 'results' | 'ropes' | 'unknown';
  lab: string | null;
  encoding: string | null;
  /** The sheet a workbook's rows were read from (their lines are its row numbers); absent for a text file. */
  sheet?: string;
  rows: { accepted: number; rejected: number; duplicate: number; superseded: number };
  rejectedRows: RowRejection[];
  rejectedRowsNotListed: number;
  /** Result sample IDs of this file with no rope yet: kept, and resolved when the sheet arrives (first 500). */
  unresolvedSampleIds: string[];
  /** Unresolved sample IDs beyond those listed. */
  unresolvedNotListed: number;
  /** Earlier results that this rope sheet (or pattern) has now placed in a pen. */
  resolvedSampleIds: string[];
  warnings: string[];
  reason: { code: RejectionCode; message: string; line: number | null; field: string | null } | null;
  /** Sites whose outputs this file changed. */
  sites: string[];
  // The lists below are on every receipt that ingest writes (first RECEIPT_LIST_LIMIT of each, all counted).
  /** Rows read as invalid (retest, never negative), each with the reason. */
  invalidRows?: InvalidNote[];
  invalidRowsNotListed?: number;
  /** Rows whose lab call names another class than ropewatch reads from the value: both readings. */
  callDisagreements?: CallDisagreement[];
  callDisagreementsNotListed?: number;
  /** Reports of this file that replaced earlier ones, or that earlier ones kept out: both readings and report dates. */
  supersessions?: SupersessionNote[];
  supersessionsNotListed?: number;
  /** Rows read under the sample ID a person confirmed in config/corrections.yaml. */
  sampleIdCorrections?: IdCorrectionNote[];
}

/** A receipt with nothing stored, refused or noted yet (status `accepted` until told otherwise). */
export function emptyReceipt(file: string, sha256: string, receivedAt: string): Receipt {
  return {
    file,
    sha256,
    receivedAt,
    status: 'accepted',
    kind: 'unknown',
    lab: null,
    encoding: null,
    rows: { accepted: 0, rejected: 0, duplicate: 0, superseded: 0 },
    rejectedRows: [],
    rejectedRowsNotListed: 0,
    unresolvedSampleIds: [],
    unresolvedNotListed: 0,
    resolvedSampleIds: [],
    warnings: [],
    reason: null,
    sites: [],
    invalidRows: [],
    invalidRowsNotListed: 0,
    callDisagreements: [],
    callDisagreementsNotListed: 0,
    supersessions: [],
    supersessionsNotListed: 0,
    sampleIdCorrections: [],
  };
}
