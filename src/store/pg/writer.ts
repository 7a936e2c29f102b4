/**
 * The PostgreSQL store's writing side (`StoreWriter`, src/domain/store.ts), with the SQLite
 * writer's behaviour (src/store/writer.ts): one transaction per input file, beginFile ...
 * commit or rollback. Rows are decided by the same flow (src/store/rowWriter.ts) and the rules
 * ingest hands in, and go in per batch in bulk (bulkSink.ts).
 *
 * Several processes may write at once. The file's row is claimed with `INSERT ... ON CONFLICT
 * (sha256) DO NOTHING`: a second process with the same bytes waits for the first's transaction
 * and then finds them stored (FileAlreadyStoredError). A batch that meets rows another process
 * stored after it looked (or a deadlock, or a serialization failure) rolls the file back and
 * throws StoreConflictError naming the sites the attempt touched; the next attempt takes
 * transaction-level advisory locks on those sites, in sorted order, right after BEGIN
 * (PostgreSQL 17 documentation, "Advisory Locks", pg_advisory_xact_lock).
 */
import type { PlannedRope, ResultRow, RopeRow, RowList, StoredFile } from '../../domain/records.js';
import type { RowRejection } from '../../domain/rejections.js';
import {
  type BeginFileOptions,
  FileAlreadyStoredError,
  type FileToStore,
  type InsertCounts,
  type OpenFileEffects,
  RECEIPT_LIST_LIMIT,
  type RejectedFile,
  type RowRules,
  type SiteChange,
  StoreConflictError,
  type StoreWriter,
} from '../../domain/store.js';
import { RowWriter, siteChanges } from '../rowWriter.js';
import { PgBulkSink } from './bulkSink.js';
import { createStaging, isConflict } from './bulkFlush.js';
import { planWrites } from './planWrites.js';
import { giveBackIds, type Sequences, sequencesOf } from './sequences.js';
import type { SyncConnection } from './syncConnection.js';

/** The first key of the site locks (pg_advisory_xact_lock(int, int)): "rw" in ASCII. */
export const SITE_LOCK_CLASS = 0x7277;

const INSERT_FILE = `INSERT INTO files (name, sha256, kind, lab_id, received_at, status, reason_code, reason, reason_line, reason_field, encoding_note, byte_length, bytes)
  VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13) ON CONFLICT (sha256) DO NOTHING RETURNING id`;
const TAKE_OVER_FILE = `UPDATE files SET name = $2, kind = $3, lab_id = $4, received_at = $5, status = 'accepted', reason_code = NULL, reason = NULL,
  reason_line = NULL, reason_field = NULL, encoding_note = $6, byte_length = $7, bytes = NULL WHERE id = $1`;

export class PgWriter implements StoreWriter {
  private inFile = false;
  private reopened = false;
  private rules: RowRules | undefined;
  private readonly sink: PgBulkSink;
  private readonly rows: RowWriter;
  private readonly sequences: Sequences;
  /** The id the open file's record took from the sequence, when it made a new record. */
  private fileIdTaken: number | undefined;
  /** The open file's id (its ropes carry it). */
  private fileId = 0;

  /**
   * @param findFileByHash the reader's look-up of a file by its bytes' hash (reads this connection's transaction).
   */
  constructor(
    private readonly conn: SyncConnection,
    private readonly findFileByHash: (sha256: string) => StoredFile | undefined,
  ) {
    createStaging(conn);
    this.sequences = sequencesOf(conn);
    this.sink = new PgBulkSink(conn, this.sequences);
    this.rows = new RowWriter(this.sink);
  }

  get fileOpen(): boolean {
    return this.inFile;
  }

  /**
   * Opens the file's transaction and records the file; returns its id. Bytes refused before take
   * over their earlier record.
   * @throws FileAlreadyStoredError when the same bytes are stored (by another process, perhaps
   *   while this one waited on its claim); StoreConflictError when the server gave the
   *   transaction up (a deadlock).
   */
  beginFile(file: FileToStore, rules: RowRules, options: BeginFileOptions = {}): number {
    if (this.inFile) throw new Error('a file transaction is already open');
    this.conn.query('BEGIN');
    this.inFile = true;
    this.rules = rules;
    this.reopened = false;
    this.fileIdTaken = undefined;
    this.rows.startFile();
    this.sink.startFile();
    try {
      return this.guarded(
        () => {
          for (const site of [...new Set(options.lockSites ?? [])].sort())
            this.conn.query('SELECT pg_advisory_xact_lock($1, hashtext($2))', [SITE_LOCK_CLASS, site]);
          this.fileId = this.claimFile(file, options.reopen);
          return this.fileId;
        },
        () => options.lockSites ?? [],
      );
    } catch (error) {
      this.rollback();
      throw error;
    }
  }

  private claimFile(file: FileToStore, reopen: number | undefined): number {
    let known = this.findFileByHash(file.sha256);
    if (known === undefined) {
      const inserted = this.conn.query<{ id: number }>(INSERT_FILE, [
        file.name,
        file.sha256,
        file.kind,
        file.labId,
        file.receivedAt,
        'accepted',
        null,
        null,
        null,
        null,
        file.encodingNote,
        file.byteLength,
        null,
      ]).rows[0];
      if (inserted !== undefined) {
        this.fileIdTaken = inserted.id;
        return inserted.id;
      }
      // Another process claimed the same bytes; its transaction has ended (the INSERT waited for it).
      known = this.findFileByHash(file.sha256);
      if (known === undefined) throw new Error(`the record of ${file.name} vanished while it was claimed`);
    }
    if (known.status === 'accepted' && known.id === reopen) {
      // Read again for the refused rows a confirmed correction now covers (as the SQLite writer).
      this.reopened = true;
      return known.id;
    }
    if (known.status === 'accepted') {
      this.rollback();
      throw new FileAlreadyStoredError(known);
    }
    this.conn.query(TAKE_OVER_FILE, [
      known.id,
      file.name,
      file.kind,
      file.labId,
      file.receivedAt,
      file.encodingNote,
      file.byteLength,
    ]);
    return known.id;
  }

  insertResults(fileId: number, rows: RowList<ResultRow>, sampleIdField = 'sample ID'): InsertCounts {
    const rules = this.requireFile();
    return this.guarded(
      () => this.rows.insertResults(fileId, rows, rules, sampleIdField),
      () => {
        const sites: string[] = [];
        for (let i = 0; i < rows.length; i++) {
          const site = rows.at(i)?.encodedRope?.siteId;
          if (site !== undefined) sites.push(site);
        }
        return sites;
      },
    );
  }

  insertRopes(fileId: number, rows: readonly RopeRow[]): InsertCounts {
    const rules = this.requireFile();
    return this.guarded(
      () => this.rows.insertRopes(fileId, rows, rules),
      () => rows.map((row) => row.siteId),
    );
  }

  insertRejections(fileId: number, rejections: readonly RowRejection[]): void {
    this.requireFile();
    this.guarded(
      () => this.rows.insertRejections(fileId, rejections, this.reopened),
      () => [],
    );
  }

  finishFile(fileId: number, counts: { accepted: number; rejected: number; duplicate: number }): void {
    this.requireFile();
    // A file read again adds the rows its corrections let in; its first counts stand.
    if (this.reopened)
      this.conn.query('UPDATE files SET rows_accepted = rows_accepted + $1 WHERE id = $2', [counts.accepted, fileId]);
    else
      this.conn.query('UPDATE files SET rows_accepted = $2, rows_rejected = $3, rows_duplicate = $4 WHERE id = $1', [
        fileId,
        counts.accepted,
        counts.rejected,
        counts.duplicate,
      ]);
  }

  /** What the open file changed, for its receipt (as the SQLite writer's openFileEffects). */
  openFileEffects(): OpenFileEffects {
    this.requireFile();
    const unplaced = [...new Set(this.sink.unplacedSamples())];
    const unresolved = this.conn.query<{ id: string; n: number }>(
      `SELECT s.sample_id AS id, count(*) OVER () AS n FROM unnest($1::bigint[]) AS f(sample) JOIN samples s ON s.id = f.sample
        WHERE NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample = f.sample)
          AND NOT EXISTS (SELECT 1 FROM ropes h WHERE h.pool = f.sample)
          AND NOT EXISTS (SELECT 1 FROM planned_ropes p WHERE p.sample_id = s.sample_id OR p.pool_id = s.sample_id)
        ORDER BY s.sample_id COLLATE "C" LIMIT $2`,
      [unplaced, RECEIPT_LIST_LIMIT],
    ).rows;
    // Planned sample IDs resolve to the plan's pen, a pool's result to its ropes' pens: their sites
    // are touched too. A pool's ropes change from their day; a planned rope counts as hung from its
    // result's collection date or its due date (`ropes`), and stops counting once a sheet hangs it
    // or names its pool: the earlier of the two bounds where it was and where it is.
    const touched = this.conn.query<{ id: string; day: string | null }>(
      `SELECT h.site_id AS id, min(h.hung_on COLLATE "C") AS day
         FROM unnest($1::bigint[]) AS f(sample) JOIN ropes h ON h.pool = f.sample GROUP BY h.site_id
       UNION ALL
       SELECT p.site_id AS id, min(LEAST(p.due_on COLLATE "C", COALESCE(
                (SELECT min(r.collected_on COLLATE "C") FROM samples s2 JOIN results r ON r.sample = s2.id WHERE s2.sample_id = p.sample_id OR s2.sample_id = p.pool_id),
                p.due_on))) AS day
         FROM planned_ropes p JOIN samples s ON s.sample_id = p.sample_id OR s.sample_id = p.pool_id
        WHERE s.id = ANY($1::bigint[])
           OR EXISTS (SELECT 1 FROM ropes h WHERE h.sample = s.id AND h.file_id = $2)
           OR EXISTS (SELECT 1 FROM ropes h WHERE h.pool = s.id AND h.file_id = $2)
        GROUP BY p.site_id`,
      [unplaced, this.fileId],
    ).rows;
    const { effects } = this.rows;
    return {
      unresolved: unresolved.map((row) => row.id),
      unresolvedCount: unresolved[0]?.n ?? 0,
      resolved: effects.resolved.sort().slice(0, RECEIPT_LIST_LIMIT),
      ...siteChanges(effects, touched),
    };
  }

  /**
   * Counts up the version of each site the open file changed (in site order: two writers lock the
   * rows alike) and logs each change under the version it gave its site, in the same statement: a
   * site named k times goes up by k, its changes taking the k versions in the order given (as the
   * SQLite writer's one bump per change).
   */
  bumpSiteVersions(changes: readonly SiteChange[]): void {
    this.requireFile();
    if (changes.length === 0) return;
    const siteIds = changes.map((change) => change.siteId);
    this.guarded(
      () =>
        this.conn.query(
          `WITH bumped AS (
             INSERT INTO site_versions (site_id, version)
             SELECT site_id, count(*) FROM unnest($1::text[]) AS b(site_id) GROUP BY site_id ORDER BY site_id COLLATE "C"
             ON CONFLICT (site_id) DO UPDATE SET version = site_versions.version + excluded.version
             RETURNING site_id, version
           ), logged AS (
             SELECT site_id, from_day, row_number() OVER (PARTITION BY site_id ORDER BY n) AS nth,
                    count(*) OVER (PARTITION BY site_id) AS times
               FROM unnest($1::text[], $2::text[]) WITH ORDINALITY AS c(site_id, from_day, n)
           )
           INSERT INTO site_changes (site_id, version, from_day)
           SELECT l.site_id, b.version - l.times + l.nth, l.from_day FROM logged l JOIN bumped b ON b.site_id = l.site_id`,
          [siteIds, changes.map((change) => change.fromDay)],
        ),
      () => siteIds,
    );
  }

  commit(): void {
    this.requireFile();
    this.guarded(
      () => this.conn.query('COMMIT'),
      () => [],
    );
    this.endFile(false);
  }

  /** Rolls the open file back, and gives back the ids it took (sequences.ts). */
  rollback(): void {
    if (!this.inFile) return;
    // A connection that has ended took its transaction with it (the server aborts a session's open
    // transaction when the session ends): nothing to roll back, and the error that ended it is
    // the one to report, not a second one from here.
    if (!this.conn.isOpen) {
      this.endFile(true);
      return;
    }
    const taken = { ...this.sink.taken, ...(this.fileIdTaken === undefined ? {} : { files: this.fileIdTaken }) };
    try {
      this.conn.query('ROLLBACK');
    } finally {
      this.endFile(true);
    }
    giveBackIds(this.conn, this.sequences, taken);
  }

  private endFile(rolledBack: boolean): void {
    this.inFile = false;
    this.reopened = false;
    this.rules = undefined;
    this.rows.endFile(rolledBack);
  }

  private requireFile(): RowRules {
    if (!this.inFile || this.rules === undefined) throw new Error('no file transaction is open: call beginFile first');
    return this.rules;
  }

  /**
   * Runs one step of the open file. Another writer's doing (isConflict) rolls the file back and
   * becomes a StoreConflictError naming the sites touched so far and `batchSites`.
   */
  private guarded<T>(step: () => T, batchSites: () => readonly string[]): T {
    try {
      return step();
    } catch (error) {
      if (!isConflict(error)) throw error;
      const sites = [...new Set([...this.rows.effects.sites, ...batchSites()])].sort();
      this.rollback();
      throw new StoreConflictError(sites, (error as Error).message);
    }
  }

  /** Records a refused file (or a new refusal of bytes refused before), in a transaction of its own. */
  recordRejectedFile(file: RejectedFile): void {
    this.conn.transaction(() => {
      for (;;) {
        const known = this.findFileByHash(file.sha256);
        // Another process may have stored the same bytes since the caller looked: keep them.
        if (known?.status === 'accepted') return;
        if (known) {
          // Refused again: the record tells the latest refusal (its bytes are kept from the first).
          this.conn.query(
            `UPDATE files SET name = $2, kind = $3, lab_id = $4, received_at = $5, reason_code = $6, reason = $7,
               reason_line = $8, reason_field = $9 WHERE id = $1`,
            [
              known.id,
              file.name,
              file.kind ?? 'unknown',
              file.labId,
              file.receivedAt,
              file.reasonCode,
              file.reason,
              file.line ?? null,
              file.field ?? null,
            ],
          );
          return;
        }
        const inserted = this.conn.query(INSERT_FILE, [
          file.name,
          file.sha256,
          file.kind ?? 'unknown',
          file.labId,
          file.receivedAt,
          'rejected',
          file.reasonCode,
          file.reason,
          file.line ?? null,
          file.field ?? null,
          null,
          file.byteLength,
          file.bytes ?? null,
        ]).rowCount;
        // Claimed by another process meanwhile: its record is read again.
        if (inserted === 1) return;
      }
    });
  }

  /**
   * Replaces a site's plan for the round after `afterRound`: ropes no longer planned are dropped
   * unless a result already came back for them (then they stay, so the result stays placed).
   */
  replacePlan(siteId: string, afterRound: number, ropes: readonly PlannedRope[]): void {
    const run = () => planWrites(this.conn, siteId, afterRound, ropes);
    if (this.inFile) run();
    else this.conn.transaction(run);
  }

  /** Records that `outbox` now shows the site as of `siteVersion` under the configuration `configDigest`. */
  markOutputsBuilt(outbox: string, siteId: string, siteVersion: number, configDigest: string): void {
    this.conn.query(
      `INSERT INTO outputs_built (outbox, site_id, site_version, config_digest) VALUES ($1, $2, $3, $4)
       ON CONFLICT (outbox, site_id) DO UPDATE SET site_version = excluded.site_version, config_digest = excluded.config_digest`,
      [outbox, siteId, siteVersion, configDigest],
    );
  }

  setMeta(key: string, value: string): void {
    this.conn.query(
      'INSERT INTO meta (key, value) VALUES ($1, $2) ON CONFLICT (key) DO UPDATE SET value = excluded.value',
      [key, value],
    );
  }
}
