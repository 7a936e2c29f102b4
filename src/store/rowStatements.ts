/**
 * The prepared statements of the per-file unit of work, prepared once per connection (positional
 * parameters where a row binds many values: binding them by name costs more than the insert).
 */
import type Database from 'better-sqlite3';
import type { ResultRow } from '../domain/records.js';

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
    // Positional parameters: binding 22 named values per row costs more than the insert itself.
    insertResult: db.prepare(
      `INSERT INTO results (file_id, line, sample, lab_id, assay_id, lab_assay, ct, ct_raw, lab_call, accession, collected_on, reported_on,
         report_status, control, class, reason, load_band, positive_below, suspect_below, cycle_limit, call_differs, content_key,
         status_kind, status_word, lab_call_class, sample_id_as_written, measure, sp, positive_at_or_above, suspect_at_or_above)
       VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
       ON CONFLICT (sample, assay_id, lab_id, content_key) DO NOTHING`,
    ),
    currentBefore: db.prepare(
      `SELECT r.id, r.reported_on AS reportedOn, r.status_kind AS status, r.status_word AS statusWord, r.class AS resultClass, r.ct_raw AS ctRaw, r.lab_call AS labCall
       FROM results r
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

/** The insertResult statement's values, positional, in its column order. */
export type ResultValues = (string | number | null)[];

/** An array for the insertResult statement's values, to be filled in place row after row (SQLite copies what is bound). */
export function newResultValues(): ResultValues {
  return new Array<string | number | null>(30).fill(null);
}

/** Writes the insertResult statement's values into `values`, in its column order; returns `values`. */
export function fillResultValues(
  values: ResultValues,
  fileId: number,
  row: ResultRow,
  sampleKey: number,
  reasonId: number,
): ResultValues {
  values[0] = fileId;
  values[1] = row.line;
  values[2] = sampleKey;
  values[3] = row.labId;
  values[4] = row.assayId;
  values[5] = row.labAssay;
  values[6] = row.ct;
  values[7] = row.ctRaw;
  values[8] = row.labCall;
  values[9] = row.accession;
  values[10] = row.collectedOn;
  values[11] = row.reportedOn;
  values[12] = row.reportStatus;
  values[13] = row.control;
  values[14] = row.resultClass;
  values[15] = reasonId;
  values[16] = row.loadBand;
  // An S/P row has no Ct cutoffs: 0 in those NOT NULL columns (migration 5).
  values[17] = row.positiveBelow ?? 0;
  values[18] = row.suspectBelow ?? 0;
  values[19] = row.cycleLimit ?? 0;
  values[20] = row.callDiffers ? 1 : 0;
  values[21] = row.contentKey;
  values[22] = row.statusKind;
  values[23] = row.statusWord;
  values[24] = row.labCallClass;
  values[25] = row.sampleIdAsWritten;
  values[26] = row.measure;
  values[27] = row.sp;
  values[28] = row.positiveAtOrAbove;
  values[29] = row.suspectAtOrAbove;
  return values;
}
