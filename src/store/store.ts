/**
 * The SQLite store (better-sqlite3 12). One transaction per input file: `beginFile` takes the
 * write lock up front (BEGIN IMMEDIATE), rows arrive in bounded batches while the file streams,
 * and `commit` makes the whole file durable at once; `rollback` leaves no trace of it.
 *
 * Two processes on one store are serialised by SQLite's write lock: the second waits up to
 * `busyTimeoutMs` for the first file to commit, then goes on; it never interleaves rows.
 */
import Database from 'better-sqlite3';
import fs from 'node:fs';
import path from 'node:path';
import type { RowRejection } from '../ingest/errors.js';
import type { ResultRow, RopeRow } from '../ingest/rows.js';
import { MIGRATIONS } from './migrations.js';

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
}

/** A current result as the analysis reads it: the stored row's fields plus its ids. */
export type StoredResult = Pick<
  ResultRow,
  'labId' | 'sampleId' | 'assayId' | 'ct' | 'ctRaw' | 'labCall' | 'accession' | 'collectedOn' | 'reportedOn' | 'resultClass' | 'reason' | 'loadBand' | 'cycleLimit' | 'callDiffers'
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
}

export interface Supersession {
  oldResultId: number;
  newResultId: number;
  reason: string;
}

export interface InsertCounts {
  inserted: number;
  duplicates: number;
  superseded: number;
  rejections: RowRejection[];
  warnings: string[];
}

/** The same bytes were stored (by another process) while this one waited for the write lock. */
export class FileAlreadyStoredError extends Error {
  override readonly name = 'FileAlreadyStoredError';
  constructor(readonly known: StoredFile) {
    super(`the same bytes were stored as ${known.name} on ${known.receivedAt}`);
  }
}

export interface StoreOptions {
  busyTimeoutMs?: number;
}

export class Store {
  readonly db: Database.Database;
  private inFile = false;
  /** Highest result and rope row ids before the open file: its own rows are the ones above. */
  private fileStart = { result: 0, rope: 0 };
  /** Encoded ropes already placed by the open file (sample ID -> location), bounded. */
  private readonly encodedRopesThisFile = new Map<string, string>();
  private readonly statements;

  constructor(file: string, options: StoreOptions = {}) {
    if (file !== ':memory:') fs.mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
    this.db = new Database(file);
    this.db.pragma('journal_mode = WAL');
    // A file is archived only after its commit, so the commit must survive a power cut.
    this.db.pragma('synchronous = FULL');
    this.db.pragma('foreign_keys = ON');
    // A 16 MB page cache (default 2 MB) keeps the hot index pages of a large export in memory
    // while it is stored, and bounds what the store adds to the process.
    this.db.pragma('cache_size = -16384');
    this.db.pragma(`busy_timeout = ${options.busyTimeoutMs ?? 120_000}`);
    this.migrate();
    const db = this.db;
    this.statements = {
      fileByHash: db.prepare('SELECT id, name, sha256, kind, lab_id AS labId, received_at AS receivedAt, status, reason_code AS reasonCode, reason FROM files WHERE sha256 = ?'),
      insertFile: db.prepare(
        `INSERT INTO files (name, sha256, kind, lab_id, received_at, status, reason_code, reason, reason_line, reason_field, encoding_note, byte_length, bytes)
         VALUES (@name, @sha256, @kind, @labId, @receivedAt, @status, @reasonCode, @reason, @reasonLine, @reasonField, @encodingNote, @byteLength, @bytes)`,
      ),
      finishFile: db.prepare('UPDATE files SET rows_accepted = @accepted, rows_rejected = @rejected, rows_duplicate = @duplicate WHERE id = @id'),
      // Positional parameters: binding 22 named values per row costs more than the insert itself.
      insertResult: db.prepare(
        `INSERT INTO results (file_id, line, lab_id, sample_id, assay_id, lab_assay, ct, ct_raw, lab_call, accession, collected_on, reported_on,
           report_status, control, class, reason, load_band, positive_below, suspect_below, cycle_limit, call_differs, natural_key)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
         ON CONFLICT (natural_key) DO NOTHING`,
      ),
      samplesWithResults: db.prepare(
        `SELECT j.value AS sampleId FROM json_each(?) j
         WHERE EXISTS (SELECT 1 FROM results r WHERE r.sample_id = j.value AND r.lab_id = ?)`,
      ),
      currentForSample: db.prepare(
        `SELECT r.id, r.reported_on AS reportedOn FROM results r
         WHERE r.sample_id = ? AND r.lab_id = ? AND r.assay_id = ? AND r.id <> ?
           AND NOT EXISTS (SELECT 1 FROM supersessions s WHERE s.old_result_id = r.id)`,
      ),
      insertSupersession: db.prepare('INSERT INTO supersessions (old_result_id, new_result_id, reason) VALUES (?, ?, ?)'),
      ropeBySample: db.prepare('SELECT sample_id AS sampleId, site_id AS siteId, barn_id AS barnId, pen_id AS penId, hung_on AS hungOn FROM ropes WHERE sample_id = ?'),
      ropeInPenOnDay: db.prepare('SELECT sample_id AS sampleId FROM ropes WHERE site_id = ? AND barn_id = ? AND pen_id = ? AND hung_on = ? AND sample_id <> ?'),
      insertRope: db.prepare(
        `INSERT INTO ropes (sample_id, site_id, barn_id, pen_id, hung_on, source, file_id, line, note)
         VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)
         ON CONFLICT DO NOTHING`,
      ),
      insertRejection: db.prepare('INSERT INTO rejected_rows (file_id, line, field, code, value, message) VALUES (?, ?, ?, ?, ?, ?)'),
      upsertPlanned: db.prepare(
        `INSERT INTO planned_ropes (sample_id, site_id, barn_id, pen_id, side, reason, due_on, planned_at, after_round)
         VALUES (@sampleId, @siteId, @barnId, @penId, @side, @reason, @dueOn, @plannedAt, @afterRound)
         ON CONFLICT (sample_id) DO UPDATE SET site_id = excluded.site_id, barn_id = excluded.barn_id, pen_id = excluded.pen_id,
           side = excluded.side, reason = excluded.reason, due_on = excluded.due_on, planned_at = excluded.planned_at, after_round = excluded.after_round`,
      ),
    };
  }

  private migrate(): void {
    const version = this.db.pragma('user_version', { simple: true }) as number;
    for (let next = version; next < MIGRATIONS.length; next++) {
      this.db.transaction(() => {
        this.db.exec(MIGRATIONS[next]!);
        this.db.pragma(`user_version = ${next + 1}`);
      }).immediate();
    }
  }

  close(): void {
    if (this.inFile) this.rollback();
    this.db.close();
  }

  getMeta(key: string): string | undefined {
    return (this.db.prepare('SELECT value FROM meta WHERE key = ?').get(key) as { value: string } | undefined)?.value;
  }

  setMeta(key: string, value: string): void {
    this.db.prepare('INSERT INTO meta (key, value) VALUES (?, ?) ON CONFLICT (key) DO UPDATE SET value = excluded.value').run(key, value);
  }

  findFileByHash(sha256: string): StoredFile | undefined {
    return this.statements.fileByHash.get(sha256) as StoredFile | undefined;
  }

  /**
   * Opens the file's transaction (taking the write lock) and records the file. Returns its id.
   * @throws FileAlreadyStoredError when, once the lock is held, the same bytes are found stored:
   *   another process committed them while this one waited on the lock (the transaction is
   *   rolled back; the caller reports a duplicate).
   */
  beginFile(file: { name: string; sha256: string; kind: 'results' | 'ropes'; labId: string | null; receivedAt: string; encodingNote: string; byteLength: number }): number {
    if (this.inFile) throw new Error('a file transaction is already open');
    this.db.exec('BEGIN IMMEDIATE');
    this.inFile = true;
    this.encodedRopesThisFile.clear();
    this.fileStart = {
      result: (this.db.prepare('SELECT COALESCE(MAX(id), 0) AS id FROM results').get() as { id: number }).id,
      rope: (this.db.prepare('SELECT COALESCE(MAX(id), 0) AS id FROM ropes').get() as { id: number }).id,
    };
    // The caller's hash look-up ran before the lock; a second process ingesting the same file
    // at the same time waits here and must see the first one's commit, not hit UNIQUE(sha256).
    const known = this.findFileByHash(file.sha256);
    if (known) {
      this.rollback();
      throw new FileAlreadyStoredError(known);
    }
    const info = this.statements.insertFile.run({
      ...file,
      status: 'accepted',
      reasonCode: null,
      reason: null,
      reasonLine: null,
      reasonField: null,
      bytes: null,
    });
    return Number(info.lastInsertRowid);
  }

  /** Stores a batch of result rows; links reissues to what they supersede. Call inside `beginFile`. */
  insertResults(fileId: number, rows: readonly ResultRow[]): InsertCounts {
    this.requireFile();
    const counts: InsertCounts = { inserted: 0, duplicates: 0, superseded: 0, rejections: [], warnings: [] };
    // One query per batch finds the samples that already have results; only their rows can
    // supersede anything, so the per-row look-up runs for those alone.
    const mayHaveEarlier = new Set<string>();
    const samplesByLab = new Map<string, Set<string>>();
    for (const row of rows) {
      const samples = samplesByLab.get(row.labId) ?? new Set<string>();
      samples.add(row.sampleId);
      samplesByLab.set(row.labId, samples);
    }
    for (const [labId, samples] of samplesByLab) {
      for (const { sampleId } of this.statements.samplesWithResults.all(JSON.stringify([...samples]), labId) as { sampleId: string }[]) mayHaveEarlier.add(`${labId}|${sampleId}`);
    }
    for (const row of rows) {
      const sampleKey = `${row.labId}|${row.sampleId}`;
      const info = this.statements.insertResult.run(
        fileId, row.line, row.labId, row.sampleId, row.assayId, row.labAssay, row.ct, row.ctRaw, row.labCall, row.accession, row.collectedOn, row.reportedOn,
        row.reportStatus, row.control, row.resultClass, row.reason, row.loadBand, row.positiveBelow, row.suspectBelow, row.cycleLimit, row.callDiffers ? 1 : 0, row.naturalKey,
      );
      if (info.changes === 0) {
        counts.duplicates++;
        continue;
      }
      counts.inserted++;
      const newId = Number(info.lastInsertRowid);
      const earlier = mayHaveEarlier.has(sampleKey)
        ? (this.statements.currentForSample.all(row.sampleId, row.labId, row.assayId, newId) as { id: number; reportedOn: string | null }[])
        : [];
      mayHaveEarlier.add(sampleKey);
      for (const old of earlier) {
        // The newest report is current: a later report date wins; on the same date the later file does.
        const oldIsNewer = old.reportedOn !== null && row.reportedOn !== null && old.reportedOn > row.reportedOn;
        const reason = row.markedReissue
          ? `reissued by the lab (report status "${row.reportStatus}")`
          : old.reportedOn !== row.reportedOn && !oldIsNewer
            ? `later report (${row.reportedOn ?? 'undated'} after ${old.reportedOn ?? 'undated'})`
            : 'a later file reports this sample and assay again';
        counts.superseded++;
        if (oldIsNewer && !row.markedReissue) {
          this.statements.insertSupersession.run(newId, old.id, `an earlier-dated report (${row.reportedOn}) arrived after ${old.reportedOn}`);
          break;
        }
        this.statements.insertSupersession.run(old.id, newId, reason);
      }
      if (row.encodedRope) {
        // A sample's other assays carry the same encoded rope: look it up once per file.
        const location = `${row.encodedRope.siteId}/${row.encodedRope.barnId}/${row.encodedRope.penId}/${row.encodedRope.hungOn}`;
        if (this.encodedRopesThisFile.get(row.sampleId) === location) continue;
        const rope = row.encodedRope;
        this.insertRopeRow(fileId, { siteId: rope.siteId, barnId: rope.barnId, penId: rope.penId, hungOn: rope.hungOn, sampleId: row.sampleId, line: row.line, note: null, warning: undefined }, 'sample-pattern', counts);
        if (this.encodedRopesThisFile.size >= 10_000) this.encodedRopesThisFile.clear();
        this.encodedRopesThisFile.set(row.sampleId, location);
      }
    }
    return counts;
  }

  private insertRopeRow(fileId: number, row: RopeRow, source: 'sheet' | 'sample-pattern', counts: InsertCounts): void {
    // The common case is a new rope in a free pen: insert first, explain a refusal afterwards.
    const info = this.statements.insertRope.run(row.sampleId, row.siteId, row.barnId, row.penId, row.hungOn, source, fileId, row.line, row.note);
    if (info.changes === 1) {
      if (source === 'sheet') counts.inserted++;
      if (row.warning) counts.warnings.push(`line ${row.line}: ${row.warning}`);
      return;
    }
    const existing = this.statements.ropeBySample.get(row.sampleId) as StoredRope | undefined;
    if (existing) {
      const same = existing.siteId === row.siteId && existing.barnId === row.barnId && existing.penId === row.penId && existing.hungOn === row.hungOn;
      if (same) counts.duplicates += source === 'sheet' ? 1 : 0;
      else {
        counts.rejections.push({
          line: row.line,
          field: 'sample_id',
          code: 'sample-id-reused',
          value: row.sampleId,
          message: `sample ${row.sampleId} already hung in ${existing.siteId}/${existing.barnId}/${existing.penId} on ${existing.hungOn}`,
        });
      }
      return;
    }
    const clash = this.statements.ropeInPenOnDay.get(row.siteId, row.barnId, row.penId, row.hungOn, row.sampleId) as { sampleId: string } | undefined;
    counts.rejections.push({
      line: row.line,
      field: 'pen',
      code: 'pen-twice-same-day',
      value: row.penId,
      message: `pen ${row.barnId}/${row.penId} already has sample ${clash?.sampleId ?? '(another sample)'} on ${row.hungOn}; one rope per pen per day (hang a retest on another day or correct the sheet)`,
    });
  }

  /** Stores a batch of rope-sheet rows. Call inside `beginFile`. */
  insertRopes(fileId: number, rows: readonly RopeRow[]): InsertCounts {
    this.requireFile();
    const counts: InsertCounts = { inserted: 0, duplicates: 0, superseded: 0, rejections: [], warnings: [] };
    for (const row of rows) this.insertRopeRow(fileId, row, 'sheet', counts);
    return counts;
  }

  insertRejections(fileId: number, rejections: readonly RowRejection[]): void {
    this.requireFile();
    for (const r of rejections) this.statements.insertRejection.run(fileId, r.line, r.field ?? null, r.code, r.value ?? null, r.message);
  }

  finishFile(fileId: number, counts: { accepted: number; rejected: number; duplicate: number }): void {
    this.requireFile();
    this.statements.finishFile.run({ id: fileId, ...counts });
  }

  /**
   * What the open file changed, for its receipt: its result samples with no rope yet (at most
   * `limit` listed, all counted), earlier results its ropes now place, and the sites it touched.
   */
  openFileEffects(limit: number): { unresolved: string[]; unresolvedCount: number; resolved: string[]; sites: string[] } {
    this.requireFile();
    const range = { result: this.fileStart.result, rope: this.fileStart.rope, limit };
    const unresolvedSql = `FROM results r WHERE r.id > @result
         AND NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample_id = r.sample_id)
         AND NOT EXISTS (SELECT 1 FROM planned_ropes p WHERE p.sample_id = r.sample_id)`;
    const ids = (sql: string) => (this.db.prepare(sql).all(range) as { id: string }[]).map((row) => row.id);
    return {
      unresolved: ids(`SELECT DISTINCT r.sample_id AS id ${unresolvedSql} ORDER BY 1 LIMIT @limit`),
      unresolvedCount: (this.db.prepare(`SELECT COUNT(DISTINCT r.sample_id) AS n ${unresolvedSql}`).get(range) as { n: number }).n,
      resolved: ids(
        `SELECT DISTINCT h.sample_id AS id FROM ropes h JOIN results r ON r.sample_id = h.sample_id
         WHERE h.id > @rope AND r.id <= @result ORDER BY 1 LIMIT @limit`,
      ),
      sites: ids(
        `SELECT site_id AS id FROM ropes WHERE id > @rope
         UNION SELECT h.site_id FROM results r JOIN ropes h ON h.sample_id = r.sample_id WHERE r.id > @result
         UNION SELECT p.site_id FROM results r JOIN planned_ropes p ON p.sample_id = r.sample_id WHERE r.id > @result
         ORDER BY 1`,
      ),
    };
  }

  commit(): void {
    this.requireFile();
    this.db.exec('COMMIT');
    this.inFile = false;
  }

  rollback(): void {
    if (!this.inFile) return;
    this.db.exec('ROLLBACK');
    this.inFile = false;
  }

  get fileOpen(): boolean {
    return this.inFile;
  }

  private requireFile(): void {
    if (!this.inFile) throw new Error('no file transaction is open: call beginFile first');
  }

  /** Records a refused file with its bytes and reason, in a transaction of its own. */
  recordRejectedFile(file: {
    name: string;
    /** What the file was recognised as before it was refused, when it got that far. */
    kind?: 'results' | 'ropes' | 'unknown';
    sha256: string;
    receivedAt: string;
    reasonCode: string;
    reason: string;
    line: number | undefined;
    field: string | undefined;
    bytes: Buffer | undefined;
    byteLength: number;
    labId: string | null;
  }): void {
    this.db.transaction(() => {
      // Another process may have recorded the same bytes since the caller looked: keep the first.
      if (this.findFileByHash(file.sha256)) return;
      this.statements.insertFile.run({
        name: file.name,
        sha256: file.sha256,
        kind: file.kind ?? 'unknown',
        labId: file.labId,
        receivedAt: file.receivedAt,
        status: 'rejected',
        reasonCode: file.reasonCode,
        reason: file.reason,
        reasonLine: file.line ?? null,
        reasonField: file.field ?? null,
        encodingNote: null,
        byteLength: file.byteLength,
        bytes: file.bytes ?? null,
      });
    }).immediate();
  }

  /**
   * Replaces a site's plan for the round after `afterRound`: ropes no longer planned are dropped
   * unless a result already came back for them (then they stay, so the result stays placed).
   */
  replacePlan(siteId: string, afterRound: number, ropes: readonly PlannedRope[]): void {
    const run = this.db.transaction(() => {
      const keep = new Set(ropes.map((rope) => rope.sampleId));
      const current = this.db
        .prepare(
          `SELECT sample_id AS sampleId FROM planned_ropes p WHERE site_id = ? AND after_round = ?
             AND NOT EXISTS (SELECT 1 FROM results r WHERE r.sample_id = p.sample_id)`,
        )
        .all(siteId, afterRound) as { sampleId: string }[];
      const remove = this.db.prepare('DELETE FROM planned_ropes WHERE sample_id = ?');
      for (const { sampleId } of current) if (!keep.has(sampleId)) remove.run(sampleId);
      for (const rope of ropes) this.statements.upsertPlanned.run(rope);
    });
    if (this.inFile) run();
    else run.immediate();
  }

  // ---- Queries -------------------------------------------------------------------------------

  /** Every rope with a known location: rope sheets, sample patterns, and planned ropes whose results came back. */
  ropes(siteId?: string): StoredRope[] {
    const where = siteId === undefined ? '' : 'WHERE site_id = @siteId';
    const hung = this.db
      .prepare(`SELECT sample_id AS sampleId, site_id AS siteId, barn_id AS barnId, pen_id AS penId, hung_on AS hungOn, source FROM ropes ${where}`)
      .all({ siteId }) as StoredRope[];
    // A planned rope counts as hung once a result for it arrives: on its collection date, else its due date.
    const planned = this.db
      .prepare(
        `SELECT p.sample_id AS sampleId, p.site_id AS siteId, p.barn_id AS barnId, p.pen_id AS penId,
                COALESCE(MIN(r.collected_on), p.due_on) AS hungOn, 'plan' AS source
         FROM planned_ropes p JOIN results r ON r.sample_id = p.sample_id
         WHERE NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample_id = p.sample_id) ${siteId === undefined ? '' : 'AND p.site_id = @siteId'}
         GROUP BY p.sample_id`,
      )
      .all({ siteId }) as StoredRope[];
    return [...hung, ...planned];
  }

  /** Results that no later report supersedes. */
  /**
   * Results that no later report supersedes; with a site, only those whose sample is one of the
   * site's ropes or planned ropes (so rewriting one site's outputs never reads the whole store).
   */
  currentResults(siteId?: string): StoredResult[] {
    const ofSite =
      siteId === undefined
        ? ''
        : 'AND r.sample_id IN (SELECT sample_id FROM ropes WHERE site_id = @siteId UNION SELECT sample_id FROM planned_ropes WHERE site_id = @siteId)';
    return this.db
      .prepare(
        `SELECT id, file_id AS fileId, lab_id AS labId, sample_id AS sampleId, assay_id AS assayId, ct, ct_raw AS ctRaw, lab_call AS labCall,
                accession, collected_on AS collectedOn, reported_on AS reportedOn, class AS resultClass, reason, load_band AS loadBand,
                cycle_limit AS cycleLimit, call_differs AS callDiffers
         FROM results r WHERE NOT EXISTS (SELECT 1 FROM supersessions s WHERE s.old_result_id = r.id) ${ofSite}
         ORDER BY id`,
      )
      .all(siteId === undefined ? {} : { siteId })
      .map((row) => ({ ...(row as StoredResult), callDiffers: Boolean((row as { callDiffers: number }).callDiffers) }));
  }

  supersessions(): Supersession[] {
    return this.db.prepare('SELECT old_result_id AS oldResultId, new_result_id AS newResultId, reason FROM supersessions').all() as Supersession[];
  }

  /** Sample IDs of current results with no known rope (not on any sheet, pattern or plan). */
  unresolvedSampleIds(): string[] {
    return (
      this.db
        .prepare(
          `SELECT DISTINCT r.sample_id AS sampleId FROM results r
           WHERE NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample_id = r.sample_id)
             AND NOT EXISTS (SELECT 1 FROM planned_ropes p WHERE p.sample_id = r.sample_id)
           ORDER BY r.sample_id`,
        )
        .all() as { sampleId: string }[]
    ).map((row) => row.sampleId);
  }

  plannedRopes(siteId?: string): PlannedRope[] {
    return this.db
      .prepare(
        `SELECT sample_id AS sampleId, site_id AS siteId, barn_id AS barnId, pen_id AS penId, side, reason, due_on AS dueOn,
                planned_at AS plannedAt, after_round AS afterRound FROM planned_ropes ${siteId === undefined ? '' : 'WHERE site_id = ?'} ORDER BY sample_id`,
      )
      .all(...(siteId === undefined ? [] : [siteId])) as PlannedRope[];
  }

  /** Sample IDs of planned ropes for which no result has come back. */
  plannedWithoutResults(siteId: string): PlannedRope[] {
    return this.db
      .prepare(
        `SELECT sample_id AS sampleId, site_id AS siteId, barn_id AS barnId, pen_id AS penId, side, reason, due_on AS dueOn,
                planned_at AS plannedAt, after_round AS afterRound
         FROM planned_ropes p WHERE site_id = ? AND NOT EXISTS (SELECT 1 FROM results r WHERE r.sample_id = p.sample_id)
         ORDER BY sample_id`,
      )
      .all(siteId) as PlannedRope[];
  }

  files(): (StoredFile & { rowsAccepted: number; rowsRejected: number; rowsDuplicate: number })[] {
    return this.db
      .prepare(
        `SELECT id, name, sha256, kind, lab_id AS labId, received_at AS receivedAt, status, reason_code AS reasonCode, reason,
                rows_accepted AS rowsAccepted, rows_rejected AS rowsRejected, rows_duplicate AS rowsDuplicate FROM files ORDER BY id`,
      )
      .all() as (StoredFile & { rowsAccepted: number; rowsRejected: number; rowsDuplicate: number })[];
  }

  rejectedRows(fileId: number): RowRejection[] {
    return this.db.prepare('SELECT line, field, code, value, message FROM rejected_rows WHERE file_id = ? ORDER BY line').all(fileId) as RowRejection[];
  }

  counts(): { files: number; rejectedFiles: number; results: number; currentResults: number; ropes: number; rejectedRows: number; planned: number } {
    const one = (sql: string) => (this.db.prepare(sql).get() as { n: number }).n;
    return {
      files: one('SELECT COUNT(*) AS n FROM files'),
      rejectedFiles: one("SELECT COUNT(*) AS n FROM files WHERE status = 'rejected'"),
      results: one('SELECT COUNT(*) AS n FROM results'),
      currentResults: one('SELECT COUNT(*) AS n FROM results r WHERE NOT EXISTS (SELECT 1 FROM supersessions s WHERE s.old_result_id = r.id)'),
      ropes: one('SELECT COUNT(*) AS n FROM ropes'),
      rejectedRows: one('SELECT COUNT(*) AS n FROM rejected_rows'),
      planned: one('SELECT COUNT(*) AS n FROM planned_ropes'),
    };
  }
}
