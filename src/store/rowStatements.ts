/**
 * The prepared statements of the per-file unit of work, prepared once per connection (positional
 * parameters where a row binds many values: binding them by name costs more than the insert).
 */
import type Database from 'better-sqlite3';
import type { ResultRow } from '../domain/records.js';
import { READING_COLUMNS, type ReadingValue } from './readings.js';

/**
 * Prepares the statements a file's rows are stored with; creates the connection's temporary
 * table of samples the open file stored results for that hang in no pen yet (for its receipt).
 */
export function prepareRowStatements(db: Database.Database) {
  db.exec('CREATE TEMP TABLE IF NOT EXISTS file_unplaced (sample INTEGER PRIMARY KEY)');
  return {
    fileByHash: db.prepare(
      'SELECT id, name, sha256, kind, lab_id AS labId, received_at AS receivedAt, status, reason_code AS reasonCode, reason FROM files WHERE sha256 = ?',
    ),
    insertFile: db.prepare(
      `INSERT INTO files (name, sha256, kind, lab_id, received_at, status, reason_code, reason, reason_line, reason_field, encoding_note, byte_length, bytes)
       VALUES (@name, @sha256, @kind, @labId, @receivedAt, @status, @reasonCode, @reason, @reasonLine, @reasonField, @encodingNote, @byteLength, @bytes)`,
    ),
    finishFile: db.prepare(
      'UPDATE files SET rows_accepted = @accepted, rows_rejected = @rejected, rows_duplicate = @duplicate WHERE id = @id',
    ),
    sampleByText: db.prepare(
      `SELECT s.id, EXISTS (SELECT 1 FROM results r WHERE r.sample = s.id) AS hasResults,
              h.site_id AS siteId, h.barn_id AS barnId, h.pen_id AS penId, h.hung_on AS hungOn
       FROM samples s LEFT JOIN ropes h ON h.sample = s.id WHERE s.sample_id = ?`,
    ),
    insertSample: db.prepare('INSERT INTO samples (sample_id) VALUES (?) ON CONFLICT (sample_id) DO NOTHING'),
    noteUnplaced: db.prepare('INSERT INTO temp.file_unplaced (sample) VALUES (?) ON CONFLICT DO NOTHING'),
    reasonByText: db.prepare('SELECT id FROM reasons WHERE text = ?').pluck(),
    insertReason: db.prepare('INSERT INTO reasons (text) VALUES (?)'),
    // Positional parameters: binding 16 named values per row costs more than the insert itself.
    insertResult: db.prepare(
      `INSERT INTO results (file_id, line, sample, lab_id, assay_id, ct, ct_raw, accession, collected_on, reported_on, reason, content_key,
         sample_id_as_written, sp, reading)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
       ON CONFLICT (sample, assay_id, lab_id, content_key) DO NOTHING`,
    ),
    readingByValues: db
      .prepare(
        `SELECT id FROM readings WHERE ${READING_COLUMNS.map((column) => `${column} IS ?`).join(' AND ')} ORDER BY id LIMIT 1`,
      )
      .pluck(),
    insertReading: db.prepare(
      `INSERT INTO readings (${READING_COLUMNS.join(', ')}) VALUES (${READING_COLUMNS.map(() => '?').join(', ')})`,
    ),
    currentBefore: db.prepare(
      `SELECT r.id, r.reported_on AS reportedOn, r.status_kind AS status, r.status_word AS statusWord, r.class AS resultClass, r.ct_raw AS ctRaw, r.lab_call AS labCall
       FROM results_read r
       WHERE r.sample = ? AND r.assay_id = ? AND r.lab_id = ? AND r.id < ?
         AND NOT EXISTS (SELECT 1 FROM supersessions s WHERE s.old_result_id = r.id)`,
    ),
    insertSupersession: db.prepare(
      'INSERT INTO supersessions (old_result_id, new_result_id, reason, kind) VALUES (?, ?, ?, ?)',
    ),
    ropeBySample: db.prepare(
      'SELECT site_id AS siteId, barn_id AS barnId, pen_id AS penId, hung_on AS hungOn FROM ropes WHERE sample = ?',
    ),
    ropeInPenOnDay: db.prepare(
      `SELECT s.sample_id AS sampleId FROM ropes h JOIN samples s ON s.id = h.sample
       WHERE h.site_id = ? AND h.barn_id = ? AND h.pen_id = ? AND h.hung_on = ? AND h.sample <> ?`,
    ),
    insertRope: db.prepare(
      `INSERT INTO ropes (sample, site_id, barn_id, pen_id, hung_on, source, file_id, line, note, pool)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
       ON CONFLICT DO NOTHING`,
    ),
    ropeInPool: db.prepare('SELECT 1 FROM ropes WHERE pool = ?').pluck(),
    rejectionExists: db.prepare('SELECT 1 FROM rejected_rows WHERE file_id = ? AND line = ? AND code = ?').pluck(),
    insertRejection: db.prepare(
      'INSERT INTO rejected_rows (file_id, line, field, code, value, message, suggested_id, candidate_ids) VALUES (?, ?, ?, ?, ?, ?, ?, ?)',
    ),
    upsertPlanned: db.prepare(
      `INSERT INTO planned_ropes (sample_id, site_id, barn_id, pen_id, side, reason, due_on, planned_at, after_round, pool_id)
       VALUES (@sampleId, @siteId, @barnId, @penId, @side, @reason, @dueOn, @plannedAt, @afterRound, @poolId)
       ON CONFLICT (sample_id) DO UPDATE SET site_id = excluded.site_id, barn_id = excluded.barn_id, pen_id = excluded.pen_id,
         side = excluded.side, reason = excluded.reason, due_on = excluded.due_on, planned_at = excluded.planned_at, after_round = excluded.after_round,
         pool_id = excluded.pool_id`,
    ),
  };
}

export type RowStatements = ReturnType<typeof prepareRowStatements>;

/**
 * Runs the insertResult statement for one row, its values passed as arguments in its column
 * order. better-sqlite3 reads arguments straight from the call, while an array is read element
 * by element through V8's object interface: arguments bind about a fifth faster than an array
 * (measured with 1,000,000 rows of the bench's export).
 */
export function runInsertResult(
  statements: RowStatements,
  fileId: number,
  row: ResultRow,
  sampleKey: number,
  reasonId: number,
  readingId: number,
): Database.RunResult {
  return statements.insertResult.run(
    fileId,
    row.line,
    sampleKey,
    row.labId,
    row.assayId,
    row.ct,
    row.ctRaw,
    row.accession,
    row.collectedOn,
    row.reportedOn,
    reasonId,
    row.contentKey,
    row.sampleIdAsWritten,
    row.sp,
    readingId,
  );
}

/** The id of the stored reading with these values (READING_COLUMNS order), storing it when there is none. */
export function findOrInsertReading(statements: RowStatements, values: readonly ReadingValue[]): number {
  return (
    (statements.readingByValues.get(values) as number | undefined) ??
    Number(statements.insertReading.run(values).lastInsertRowid)
  );
}
