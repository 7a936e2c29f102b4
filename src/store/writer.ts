/**
 * The SQLite store's writing side. One transaction per input file: `beginFile` takes the write
 * lock up front (BEGIN IMMEDIATE), rows arrive in bounded batches while the file streams, and
 * `commit` makes the whole file durable at once; `rollback` leaves no trace of it.
 *
 * Two processes on one store are serialised by SQLite's write lock: the second waits up to
 * `busyTimeoutMs` for the first file to commit, then goes on; it never interleaves rows.
 */
import type Database from 'better-sqlite3';
import type { PlannedRope, ResultRow, RopeRow, RowList, StoredFile } from '../domain/records.js';
import type { RowRejection } from '../domain/rejections.js';
import {
  type BeginFileOptions,
  FileAlreadyStoredError,
  StoreBusyError,
  RECEIPT_LIST_LIMIT,
  type SiteChange,
  type FileToStore,
  type InsertCounts,
  type OpenFileEffects,
  type RejectedFile,
  type RowRules,
  type StoreWriter,
} from '../domain/store.js';
import { RowWriter, siteChanges } from './rowWriter.js';
import { prepareRowStatements, type RowStatements } from './rowStatements.js';
import { SqliteRowSink } from './sqliteRowSink.js';

export class SqliteWriter implements StoreWriter {
  private inFile = false;
  /** The open file was stored before and is read again (beginFile's `reopen`). */
  private reopened = false;
  /** The rules the open file's rows are stored by. */
  private rules: RowRules | undefined;
  private readonly statements: RowStatements;
  private readonly rows: RowWriter;

  constructor(private readonly db: Database.Database) {
    this.statements = prepareRowStatements(db);
    this.rows = new RowWriter(new SqliteRowSink(this.statements));
  }

  /** The open file's id (its ropes carry it). */
  private fileId = 0;

  get fileOpen(): boolean {
    return this.inFile;
  }

  private findFileByHash(sha256: string): StoredFile | undefined {
    return this.statements.fileByHash.get(sha256) as StoredFile | undefined;
  }

  /**
   * Opens the file's transaction (taking the write lock) and records the file. Returns its id.
   * Bytes refused before take over their earlier record.
   * @throws FileAlreadyStoredError when, once the lock is held, the same bytes are found stored:
   *   another process committed them while this one waited on the lock (the transaction is
   *   rolled back; the caller reports a duplicate). `lockSites` asks nothing here: the write
   *   lock serialises writers, so no other writer stores rows in between (no StoreConflictError).
   */
  beginFile(file: FileToStore, rules: RowRules, options: BeginFileOptions = {}): number {
    this.fileId = this.openFile(file, rules, options);
    return this.fileId;
  }

  private openFile(file: FileToStore, rules: RowRules, options: BeginFileOptions): number {
    if (this.inFile) throw new Error('a file transaction is already open');
    // Inside a file's transaction every parent row (file, sample, reason) is written before the
    // rows that name it, so SQLite's per-row foreign-key look-ups (a fifth of the cost of
    // storing a row) are switched off for it; every other write is checked, and the tests run
    // PRAGMA foreign_key_check after ingesting. The pragma cannot change inside a transaction.
    this.db.pragma('foreign_keys = OFF');
    try {
      this.db.exec('BEGIN IMMEDIATE');
    } catch (error) {
      this.db.pragma('foreign_keys = ON');
      if ((error as { code?: unknown }).code === 'SQLITE_BUSY')
        throw new StoreBusyError(Number(this.db.pragma('busy_timeout', { simple: true })));
      throw error;
    }
    this.inFile = true;
    this.rules = rules;
    this.rows.startFile();
    this.db.exec('DELETE FROM temp.file_unplaced');
    // The caller's hash look-up ran before the lock; a second process ingesting the same file
    // at the same time waits here and must see the first one's commit, not hit UNIQUE(sha256).
    const known = this.findFileByHash(file.sha256);
    this.reopened = false;
    if (known?.status === 'accepted' && known.id === options.reopen) {
      // Read again for the refused rows a confirmed correction now covers: the file keeps its
      // record; rows stored before come back as duplicates, refusals stored before are not
      // stored twice.
      this.reopened = true;
      return known.id;
    }
    if (known?.status === 'accepted') {
      this.rollback();
      throw new FileAlreadyStoredError(known);
    }
    if (known) {
      // Refused before, accepted now (the configuration was put right): the file's one record
      // becomes the accepted one; its refusal is told in the receipt.
      this.db
        .prepare(
          `UPDATE files SET name = @name, kind = @kind, lab_id = @labId, received_at = @receivedAt, status = 'accepted', reason_code = NULL, reason = NULL,
             reason_line = NULL, reason_field = NULL, encoding_note = @encodingNote, byte_length = @byteLength, bytes = NULL WHERE id = @id`,
        )
        .run({ ...file, id: known.id });
      return known.id;
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

  /** Stores a batch of result rows by the open file's rules. Call inside `beginFile`. */
  insertResults(fileId: number, rows: RowList<ResultRow>, sampleIdField = 'sample ID'): InsertCounts {
    return this.rows.insertResults(fileId, rows, this.requireFile(), sampleIdField);
  }

  /** Stores a batch of rope-sheet rows. Call inside `beginFile`. */
  insertRopes(fileId: number, rows: readonly RopeRow[]): InsertCounts {
    return this.rows.insertRopes(fileId, rows, this.requireFile());
  }

  insertRejections(fileId: number, rejections: readonly RowRejection[]): void {
    this.requireFile();
    this.rows.insertRejections(fileId, rejections, this.reopened);
  }

  finishFile(fileId: number, counts: { accepted: number; rejected: number; duplicate: number }): void {
    this.requireFile();
    // A file read again adds the rows its corrections let in; its first counts stand.
    if (this.reopened)
      this.db.prepare('UPDATE files SET rows_accepted = rows_accepted + ? WHERE id = ?').run(counts.accepted, fileId);
    else this.statements.finishFile.run({ id: fileId, ...counts });
  }

  /**
   * What the open file changed, for its receipt: its result samples with no rope yet (at most
   * RECEIPT_LIST_LIMIT listed, all counted), earlier results its ropes now place, and the sites
   * it touched (gathered while storing; the samples that hang nowhere are looked up here).
   */
  openFileEffects(): OpenFileEffects {
    this.requireFile();
    const unresolved = this.db
      .prepare(
        `SELECT s.sample_id AS id, COUNT(*) OVER () AS n FROM temp.file_unplaced f JOIN samples s ON s.id = f.sample
         WHERE NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample = f.sample)
           AND NOT EXISTS (SELECT 1 FROM ropes h WHERE h.pool = f.sample)
           AND NOT EXISTS (SELECT 1 FROM planned_ropes p WHERE p.sample_id = s.sample_id OR p.pool_id = s.sample_id)
         ORDER BY s.sample_id LIMIT ?`,
      )
      .all(RECEIPT_LIST_LIMIT) as { id: string; n: number }[];
    // Planned sample IDs resolve to the plan's pen, a pool's result to its ropes' pens: their sites
    // are touched too. A pool's ropes change from their day; a planned rope counts as hung from its
    // result's collection date or its due date (`ropes`), and stops counting once a sheet hangs it
    // or names its pool: the earlier of the two bounds where it was and where it is.
    const touched = this.db
      .prepare(
        `SELECT h.site_id AS id, min(h.hung_on) AS day FROM temp.file_unplaced f JOIN ropes h ON h.pool = f.sample GROUP BY h.site_id
         UNION ALL
         SELECT p.site_id AS id, min(min(p.due_on, COALESCE(
                  (SELECT min(r.collected_on) FROM samples s2 JOIN results r ON r.sample = s2.id WHERE s2.sample_id = p.sample_id OR s2.sample_id = p.pool_id),
                  p.due_on))) AS day
         FROM planned_ropes p JOIN samples s ON s.sample_id = p.sample_id OR s.sample_id = p.pool_id
         WHERE s.id IN (SELECT sample FROM temp.file_unplaced)
            OR EXISTS (SELECT 1 FROM ropes h WHERE h.sample = s.id AND h.file_id = @fileId)
            OR EXISTS (SELECT 1 FROM ropes h WHERE h.pool = s.id AND h.file_id = @fileId)
         GROUP BY p.site_id`,
      )
      .all({ fileId: this.fileId }) as { id: string; day: string | null }[];
    const { effects } = this.rows;
    return {
      unresolved: unresolved.map((row) => row.id),
      unresolvedCount: unresolved[0]?.n ?? 0,
      resolved: effects.resolved.sort().slice(0, RECEIPT_LIST_LIMIT),
      ...siteChanges(effects, touched),
    };
  }

  /** Counts up the version of each site the open file changed (their outputs are now behind) and logs the change. */
  bumpSiteVersions(changes: readonly SiteChange[]): void {
    this.requireFile();
    const bump = this.db
      .prepare(
        'INSERT INTO site_versions (site_id, version) VALUES (?, 1) ON CONFLICT (site_id) DO UPDATE SET version = version + 1 RETURNING version',
      )
      .pluck();
    const log = this.db.prepare('INSERT INTO site_changes (site_id, version, from_day) VALUES (?, ?, ?)');
    for (const change of changes) log.run(change.siteId, bump.get(change.siteId), change.fromDay);
  }

  commit(): void {
    this.requireFile();
    this.db.exec('COMMIT');
    this.endFile(false);
  }

  rollback(): void {
    if (!this.inFile) return;
    this.db.exec('ROLLBACK');
    this.endFile(true);
  }

  private endFile(rolledBack: boolean): void {
    this.inFile = false;
    this.reopened = false;
    this.rules = undefined;
    this.rows.endFile(rolledBack);
    this.db.pragma('foreign_keys = ON');
  }

  /** The open file's rules. @throws Error when no file is open. */
  private requireFile(): RowRules {
    if (!this.inFile || this.rules === undefined) throw new Error('no file transaction is open: call beginFile first');
    return this.rules;
  }

  /** Records a refused file with its bytes and reason (or a new refusal of bytes refused before), in a transaction of its own. */
  recordRejectedFile(file: RejectedFile): void {
    this.db
      .transaction(() => {
        const known = this.findFileByHash(file.sha256);
        // Another process may have stored the same bytes since the caller looked: keep them.
        if (known?.status === 'accepted') return;
        if (known) {
          // Refused again: the record tells the latest refusal (its bytes are kept from the first).
          this.db
            .prepare(
              `UPDATE files SET name = @name, kind = @kind, lab_id = @labId, received_at = @receivedAt, reason_code = @reasonCode, reason = @reason,
               reason_line = @reasonLine, reason_field = @reasonField WHERE id = @id`,
            )
            .run({
              id: known.id,
              name: file.name,
              kind: file.kind ?? 'unknown',
              labId: file.labId,
              receivedAt: file.receivedAt,
              reasonCode: file.reasonCode,
              reason: file.reason,
              reasonLine: file.line ?? null,
              reasonField: file.field ?? null,
            });
          return;
        }
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
      })
      .immediate();
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
             AND NOT EXISTS (SELECT 1 FROM samples s JOIN results r ON r.sample = s.id WHERE s.sample_id = p.sample_id OR s.sample_id = p.pool_id)`,
        )
        .all(siteId, afterRound) as { sampleId: string }[];
      const remove = this.db.prepare('DELETE FROM planned_ropes WHERE sample_id = ?');
      for (const { sampleId } of current) if (!keep.has(sampleId)) remove.run(sampleId);
      for (const rope of ropes) this.statements.upsertPlanned.run({ ...rope, poolId: rope.poolId ?? null });
    });
    if (this.inFile) run();
    else run.immediate();
  }

  /** Records that `outbox` now shows the site as of `siteVersion` under the configuration `configDigest`. */
  markOutputsBuilt(outbox: string, siteId: string, siteVersion: number, configDigest: string): void {
    this.db
      .prepare(
        `INSERT INTO outputs_built (outbox, site_id, site_version, config_digest) VALUES (?, ?, ?, ?)
         ON CONFLICT (outbox, site_id) DO UPDATE SET site_version = excluded.site_version, config_digest = excluded.config_digest`,
      )
      .run(outbox, siteId, siteVersion, configDigest);
  }

  setMeta(key: string, value: string): void {
    this.db
      .prepare('INSERT INTO meta (key, value) VALUES (?, ?) ON CONFLICT (key) DO UPDATE SET value = excluded.value')
      .run(key, value);
  }
}
