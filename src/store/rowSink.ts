/**
 * What the per-row flow of a file (rowWriter.ts) asks of a backend: the facts a row is decided
 * by (a sample, its rope, the reports it has, what hangs in a pen) and the writes a decision
 * makes. The SQLite backend answers each call with a prepared statement (sqliteRowSink.ts); the
 * PostgreSQL backend looks up a batch's facts at `beginBatch` in a few set-based queries, answers
 * from memory, and writes the batch in bulk at `endBatch` (pg/bulkSink.ts). Keys a backend hands
 * out here are opaque to the flow: it only passes them back.
 */
import type { ResultRow, RopeLocation, RopeRow, RowList } from '../domain/records.js';
import type { RowRejection } from '../domain/rejections.js';
import type { EarlierReport, SupersessionLink } from '../domain/store.js';

/** A sample as the store holds it, with its rope if it hangs in a pen. */
export interface StoredSample {
  id: number;
  /** Whether results are stored for it (SQLite gives 1 or 0, as its query returns it: no copy per sample). */
  hasResults: boolean | 0 | 1;
  siteId: string | null;
  barnId: string | null;
  penId: string | null;
  hungOn: string | null;
}

/** The rows of one call of the flow, told before they are decided. */
export interface BatchPreview {
  fileId: number;
  results?: RowList<ResultRow>;
  ropes?: readonly RopeRow[];
  rejections?: readonly RowRejection[];
  /** The file was stored before and is read again (its refusals stored before are not stored twice). */
  reopened?: boolean;
}

export interface RowSink {
  /** Before a batch's rows are decided. */
  beginBatch(batch: BatchPreview): void;
  /** After every row of the batch is decided. */
  endBatch(): void;
  /** The sample by its ID, as stored (with what this file stored for it so far). */
  findSample(sampleId: string): StoredSample | undefined;
  /** Creates the sample; its key, or undefined when it exists already. */
  createSample(sampleId: string): number | undefined;
  /** The key of a reason text, stored when new. */
  reasonId(text: string): number;
  /** Stores a result; its id, or undefined when the same report is stored already. */
  insertResult(fileId: number, row: ResultRow, sampleKey: number, reasonId: number): number | undefined;
  /** The current reports of the sample, assay and lab stored before the result `newId`. */
  currentBefore(sampleKey: number, assayId: string, labId: string, newId: number): EarlierReport[];
  insertSupersession(link: SupersessionLink): void;
  /** Hangs the rope; false when the sample hangs already or another rope holds the pen that day. */
  insertRope(
    fileId: number,
    sampleKey: number,
    row: RopeRow,
    source: 'sheet' | 'sample-pattern',
    poolKey: number | null,
  ): boolean;
  ropeBySample(sampleKey: number): RopeLocation | undefined;
  /** The sample ID of another sample's rope in that pen on that day. */
  ropeInPenOnDay(at: RopeLocation, sampleKey: number): string | undefined;
  /** Whether a rope was tested in the pool that is this sample. */
  ropeInPool(sampleKey: number): boolean;
  /** The open file stored results for the sample, which hangs in no pen yet. */
  noteUnplaced(sampleKey: number): void;
  rejectionExists(fileId: number, line: number, code: string): boolean;
  insertRejection(fileId: number, rejection: RowRejection): void;
  /** The file was rolled back: keys remembered from it may be gone. */
  forgetFile(): void;
}

/** A refused row's values in the column order of `rejected_rows` after its id (file_id, line, field, code, value, message, suggested_id, candidate_ids). */
export function rejectionValues(
  fileId: number,
  r: RowRejection,
): [number, number, string | null, string, string | null, string, string | null, string | null] {
  return [
    fileId,
    r.line,
    r.field ?? null,
    r.code,
    r.value ?? null,
    r.message,
    r.suggestedId ?? null,
    r.candidateIds?.join(' ') ?? null,
  ];
}
