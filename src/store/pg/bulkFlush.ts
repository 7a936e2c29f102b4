/**
 * Writing a decided batch to PostgreSQL in bulk, its ids taken (sequences.ts): per table one COPY
 * into a temporary staging table and one `INSERT ... SELECT ... ON CONFLICT DO NOTHING` from it,
 * whose count of rows inserted (the command tag) is checked against the rows staged (PostgreSQL
 * 17 documentation, "INSERT", sections "ON CONFLICT Clause" and "Outputs"; "COPY"). A row the
 * INSERT did not take was stored by another process after the batch looked: the batch's
 * decisions no longer hold, and `WriteConflict` is thrown (the caller rolls back and stores the
 * file again).
 *
 * Measured on this 2-core machine under the load of other work (wall times two to three times an
 * idle machine's): 300,000 result rows of the ingest benchmark's export (bench/ingest.ts) in 45 s,
 * against 13 to 25 s for the SQLite store in the same hour; two thirds of it in these INSERTs,
 * where the server checked three foreign keys per result row (a fourth, its reading, since
 * migration 2).
 */
import { RESULT_COLUMNS } from '../readings.js';
import type { ResultRow } from '../../domain/records.js';
import type { TakenIds } from './sequences.js';
import { PgError, type SqlValue, type SyncConnection } from './syncConnection.js';

/** Where each table's provisional keys start: above any stored id, one range per table, in 2^53. */
export const PROVISIONAL = Object.freeze({ reasons: 2 ** 48, samples: 2 ** 49, results: 2 ** 50, rejections: 2 ** 51 });

/** A batch's rows as they go in (provisional keys where an id is not taken yet). */
export interface BatchWrites {
  /** [key, sample_id] */
  samples: SqlValue[][];
  /** [key, text] */
  reasons: SqlValue[][];
  /** RESULT_COLUMNS */
  results: SqlValue[][];
  /** [old_result_id, new_result_id, reason, kind] */
  supersessions: SqlValue[][];
  /** ROPE_COLUMNS */
  ropes: SqlValue[][];
  /** REJECTION_COLUMNS */
  rejections: SqlValue[][];
}

const RESULT_SAMPLE = RESULT_COLUMNS.indexOf('sample');
const RESULT_REASON = RESULT_COLUMNS.indexOf('reason');
const ROPE_COLUMNS = ['sample', 'site_id', 'barn_id', 'pen_id', 'hung_on', 'source', 'file_id', 'line', 'note', 'pool'];
const REJECTION_COLUMNS = [
  'id',
  'file_id',
  'line',
  'field',
  'code',
  'value',
  'message',
  'suggested_id',
  'candidate_ids',
];

/**
 * A result row's values in RESULT_COLUMNS order (as the SQLite store's insert binds them,
 * rowStatements.ts); how it was read is its reading's (readings.ts), named by id.
 */
export function resultValues(
  id: number,
  fileId: number,
  row: ResultRow,
  sample: number,
  reason: number,
  reading: number,
): SqlValue[] {
  return [
    id,
    fileId,
    row.line,
    sample,
    row.labId,
    row.assayId,
    row.ct,
    row.ctRaw,
    row.accession,
    row.collectedOn,
    row.reportedOn,
    reason,
    row.contentKey,
    row.sampleIdAsWritten,
    row.sp,
    reading,
  ];
}

/** A row another process stored first, or a transaction the server gave up (deadlock, serialization). */
export class WriteConflict extends Error {
  override readonly name = 'WriteConflict';
}

/** SQLSTATEs that mean another transaction got there first: unique_violation, deadlock_detected, serialization_failure. */
const CONFLICT_STATES = new Set(['23505', '40P01', '40001']);

/** Whether an error is another writer's doing (then storing the file again may succeed). */
export function isConflict(error: unknown): boolean {
  return error instanceof WriteConflict || (error instanceof PgError && CONFLICT_STATES.has(error.code));
}

const STAGED = ['samples', 'reasons', 'results', 'supersessions', 'ropes', 'rejected_rows'] as const;

/** Creates this connection's staging tables (temporary: each connection has its own), outside any transaction. */
export function createStaging(conn: SyncConnection): void {
  conn.query(STAGED.map((table) => `CREATE TEMP TABLE IF NOT EXISTS stage_${table} (LIKE ${table})`).join(';\n'));
}

/** One table's staged rows moved in; throws WriteConflict when the INSERT took fewer than staged. */
function moveIn(
  conn: SyncConnection,
  table: (typeof STAGED)[number],
  columns: readonly string[],
  order: string,
  rows: SqlValue[][],
): void {
  if (rows.length === 0) return;
  conn.copyIn(`stage_${table}`, columns, rows);
  const list = columns.join(', ');
  const taken = conn.query(
    `INSERT INTO ${table} (${list}) SELECT ${list} FROM stage_${table} ORDER BY ${order} ON CONFLICT DO NOTHING`,
  ).rowCount;
  // TRUNCATE, not DELETE: a temporary table is never vacuumed, and deleted rows would stay for
  // every later batch to scan.
  conn.query(`TRUNCATE stage_${table}`);
  if (taken !== rows.length)
    throw new WriteConflict(
      `${rows.length - taken} of ${rows.length} ${table} rows were stored by another process first`,
    );
}

/** Maps a key to its id: a provisional key of `base` to `ids[key - base]`, any other key as it is. */
function resolver(
  ids: TakenIds,
  sampleId: (key: number) => number,
): { reason: (key: number) => number; sample: (key: number) => number; result: (key: number) => number } {
  return {
    reason: (key) =>
      key >= PROVISIONAL.reasons && key < PROVISIONAL.samples ? ids.reasons[key - PROVISIONAL.reasons]! : key,
    sample: sampleId,
    result: (key) =>
      key >= PROVISIONAL.results && key < PROVISIONAL.rejections ? ids.results[key - PROVISIONAL.results]! : key,
  };
}

/**
 * Writes the batch with its keys resolved (`ids` as taken by takeIds; `sampleId` resolves a
 * sample key, provisional or not, once this batch's sample ids are known), parents first.
 * @throws WriteConflict, or a PgError (a conflict when isConflict says so).
 */
export function writeBatch(
  conn: SyncConnection,
  writes: BatchWrites,
  ids: TakenIds,
  sampleId: (key: number) => number,
): void {
  const resolve = resolver(ids, sampleId);
  moveIn(
    conn,
    'reasons',
    ['id', 'text'],
    'id',
    writes.reasons.map(([key, text]) => [resolve.reason(key as number), text as string]),
  );
  moveIn(
    conn,
    'samples',
    ['id', 'sample_id'],
    'id',
    writes.samples.map(([key, text]) => [sampleId(key as number), text as string]),
  );
  for (const row of writes.results) {
    row[0] = resolve.result(row[0] as number);
    row[RESULT_SAMPLE] = sampleId(row[RESULT_SAMPLE] as number);
    row[RESULT_REASON] = resolve.reason(row[RESULT_REASON] as number);
  }
  moveIn(conn, 'results', RESULT_COLUMNS, 'id', writes.results);
  moveIn(
    conn,
    'supersessions',
    ['old_result_id', 'new_result_id', 'reason', 'kind'],
    'old_result_id',
    writes.supersessions.map(([oldId, newId, reason, kind]) => [
      resolve.result(oldId as number),
      resolve.result(newId as number),
      reason as SqlValue,
      kind as SqlValue,
    ]),
  );
  for (const row of writes.ropes) {
    row[0] = sampleId(row[0] as number);
    if (row[9] !== null) row[9] = sampleId(row[9] as number);
  }
  moveIn(conn, 'ropes', ROPE_COLUMNS, 'sample', writes.ropes);
  writes.rejections.forEach((row, index) => {
    row[0] = ids.rejections[index]!;
  });
  moveIn(conn, 'rejected_rows', REJECTION_COLUMNS, 'id', writes.rejections);
}
