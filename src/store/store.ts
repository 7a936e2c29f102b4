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
import type { RowList } from '../ingest/mappedBatches.js';
import type { ResultRow, RopeLocation, RopeRow } from '../ingest/rows.js';
import type { CallClass, ReportStatusKind } from '../config/types.js';
import type { ResultClass } from '../interpret/classify.js';
import { MIGRATION_FUNCTIONS, MIGRATIONS } from './migrations.js';
import { decideSupersession, type SupersessionKind } from '../ingest/supersession.js';

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

/** One report that replaced another, with both readings (for the receipt). */
export interface SupersessionNote {
  /** The line of this file whose row took part. */
  line: number;
  sampleId: string;
  assayId: string;
  labId: string;
  kind: SupersessionKind;
  /** Whether this file's row is the one now current (false: a report stored before stays current). */
  thisFileCurrent: boolean;
  /** The report no longer current. */
  replaced: ReportReading;
  /** The report current in its place. */
  current: ReportReading;
  reason: string;
}

/** A row this file's batch read as invalid, with the reason (for the receipt). */
export interface InvalidNote {
  line: number;
  sampleId: string;
  assayId: string;
  reason: string;
}

/** A row whose lab call names another class than its value gives (for the receipt). */
export interface CallDisagreement {
  line: number;
  sampleId: string;
  assayId: string;
  labCall: string;
  labCallClass: CallClass;
  resultClass: ResultClass;
  ctRaw: string;
}

/** A row read under another sample ID because a person confirmed the correction (config/corrections.yaml). */
export interface IdCorrectionNote {
  line: number;
  written: string;
  meant: string;
}

export interface InsertCounts {
  inserted: number;
  duplicates: number;
  superseded: number;
  rejections: RowRejection[];
  warnings: string[];
  supersessions: SupersessionNote[];
  invalid: InvalidNote[];
  callDisagreements: CallDisagreement[];
  idCorrections: IdCorrectionNote[];
}

function emptyCounts(): InsertCounts {
  return {
    inserted: 0,
    duplicates: 0,
    superseded: 0,
    rejections: [],
    warnings: [],
    supersessions: [],
    invalid: [],
    callDisagreements: [],
    idCorrections: [],
  };
}

/** The same bytes were stored (by another process) while this one waited for the write lock. */
export class FileAlreadyStoredError extends Error {
  override readonly name = 'FileAlreadyStoredError';
  constructor(readonly known: StoredFile) {
    super(`the same bytes were stored as ${known.name} on ${known.receivedAt}`);
  }
}

/** One string per place and day, to tell whether two ropes hang in the same place. */
function locationKey(rope: RopeLocation): string {
  return `${rope.siteId}/${rope.barnId}/${rope.penId}/${rope.hungOn}`;
}

/** A sample as the store holds it, with its rope if it hangs in a pen. */
interface StoredSample {
  id: number;
  hasResults: number;
  siteId: string | null;
  barnId: string | null;
  penId: string | null;
  hungOn: string | null;
}

/** What the open file knows of one sample. */
interface SampleInFile {
  key: number;
  /** The store held results for it before this file. */
  hadResults: boolean;
  /** "assay|lab" of the rows this file has stored for it (a sample has a few assays). */
  reported: string[];
  /** Where its rope hangs ("site/barn/pen/day"), stored before or placed by this file. */
  ropedAt: string | undefined;
  ropeSiteId: string | undefined;
  /** The location its sample ID encodes that this file tried to place it at. */
  patternTriedAt: string | undefined;
  /** Why its encoded location was refused, when it was: every row of the sample is refused alike. */
  patternRefusal: Omit<RowRejection, 'line'> | undefined;
  /** The file stored a result for it, and counted it for the receipt. */
  counted: boolean;
}

/** What the open file changed, gathered while it is stored (for its receipt and outputs). */
interface FileEffects {
  sites: Set<string>;
  /** Samples with results before this file that its ropes placed (the first ones by ID, bounded). */
  resolved: string[];
}
/** Samples remembered per file; rows of one sample usually sit together. */
const SAMPLES_REMEMBERED = 10_000;
/** Sample IDs and refused rows listed in a receipt (all are counted, and all are in the store). */
export const RECEIPT_LIST_LIMIT = 500;
/** Reason texts remembered: a few per Ct value and assay. */
const REASONS_REMEMBERED = 50_000;

export interface StoreOptions {
  busyTimeoutMs?: number;
  /** Create the file when it does not exist (default). Commands that only read pass false. */
  create?: boolean;
}

/** The store file cannot be used: missing, a folder, not SQLite, damaged. The message names the file. */
export class StoreOpenError extends Error {
  override readonly name = 'StoreOpenError';
  constructor(
    readonly file: string,
    detail: string,
  ) {
    super(`store ${file}: ${detail}`);
  }
}

/** SQLite result codes that mean the bytes are not a usable database (sqlite.org/rescode.html). */
function damageDetail(error: unknown): string | undefined {
  const code = error instanceof Database.SqliteError ? error.code : undefined;
  if (code === undefined) return undefined;
  if (code === 'SQLITE_NOTADB')
    return "is not a SQLite database (another program's file, or not a ropewatch store); point --db at the store file";
  if (code.startsWith('SQLITE_CORRUPT')) {
    return `is damaged (SQLite: ${error instanceof Error ? error.message : code}); a store cut short by a copy or a full disk reads like this: restore it from a backup, or point --db at another file`;
  }
  if (code.startsWith('SQLITE_CANTOPEN'))
    return `cannot be opened (SQLite: ${error instanceof Error ? error.message : code}); check the path and its permissions`;
  return undefined;
}

/** Checks the path before SQLite sees it: a folder, or a missing file that may not be created. */
function checkStoreFile(file: string, create: boolean): void {
  let stat: fs.Stats | undefined;
  try {
    stat = fs.statSync(file);
  } catch {
    stat = undefined;
  }
  if (stat?.isDirectory())
    throw new StoreOpenError(file, 'is a folder; --db takes the store file (for example data/ropewatch.db)');
  if (stat === undefined && !create) {
    throw new StoreOpenError(
      file,
      'does not exist; check --db (ingest, watch, report, plan and demo create a new store, this command only reads one)',
    );
  }
  try {
    fs.mkdirSync(path.dirname(path.resolve(file)), { recursive: true });
  } catch (error) {
    throw new StoreOpenError(file, `its folder cannot be created (${(error as Error).message})`);
  }
}

export class Store {
  readonly db: Database.Database;
  private inFile = false;
  /** The open file was stored before and is read again (beginFile's `reopen`). */
  private reopened = false;
  private effects: FileEffects = { sites: new Set(), resolved: [] };
  /**
   * Samples the open file has met (sample ID -> state), bounded: a sample's rows usually sit
   * together. A sample dropped from here is looked up again, never assumed new.
   */
  private readonly samplesThisFile = new Map<string, SampleInFile>();
  /** Whether the last sample met was new to the store: files are mostly one or the other. */
  private lastSampleWasNew = false;
  /** Reason text -> id in \`reasons\`; forgotten on rollback (the rows it names may be gone). */
  private readonly reasonIds = new Map<string, number>();
  private readonly statements;

  /**
   * Opens (or, unless `create` is false, creates) the store and brings its schema up to date.
   * @throws StoreOpenError naming the file when it is missing (and may not be created), a folder,
   *   not SQLite, damaged, or a SQLite database of another program.
   */
  constructor(file: string, options: StoreOptions = {}) {
    const create = options.create ?? true;
    if (file !== ':memory:') checkStoreFile(file, create);
    let opened: Database.Database | undefined;
    try {
      opened = new Database(file, { fileMustExist: !create });
      opened.pragma('journal_mode = WAL');
      // A file is archived only after its commit, so the commit must survive a power cut.
      opened.pragma('synchronous = FULL');
      opened.pragma('foreign_keys = ON');
      // A 16 MB page cache (default 2 MB) keeps the hot index pages of a large export in memory
      // while it is stored, and bounds what the store adds to the process.
      opened.pragma('cache_size = -16384');
      opened.pragma(`busy_timeout = ${options.busyTimeoutMs ?? 120_000}`);
      // A cheap probe that reads the header and the whole schema, not the data (PRAGMA quick_check
      // reads every page): SQLite refuses a file shorter than its header's page count here
      // (SQLITE_CORRUPT), and a file that is not SQLite at all (SQLITE_NOTADB).
      const tables = opened.prepare("SELECT count(*) FROM sqlite_schema WHERE type = 'table'").pluck().get() as number;
      const version = opened.pragma('user_version', { simple: true }) as number;
      // Tables without a schema version were made by another program: never add ours beside them.
      if (version === 0 && tables > 0)
        throw new StoreOpenError(
          file,
          'is a SQLite database of another program (it has tables but no ropewatch schema version); point --db at the store file',
        );
      this.db = opened;
      this.migrate();
    } catch (error) {
      opened?.close();
      if (error instanceof StoreOpenError) throw error;
      const detail = damageDetail(error);
      throw detail === undefined ? error : new StoreOpenError(file, detail);
    }
    // Samples the open file stored results for and that hang in no pen yet (for its receipt);
    // this connection only.
    this.db.exec('CREATE TEMP TABLE IF NOT EXISTS file_unplaced (sample INTEGER PRIMARY KEY)');
    const db = this.db;
    this.statements = {
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

  private migrate(): void {
    const version = this.db.pragma('user_version', { simple: true }) as number;
    if (version >= MIGRATIONS.length) return;
    for (const [name, fn] of Object.entries(MIGRATION_FUNCTIONS)) this.db.function(name, { deterministic: true }, fn);
    for (let next = version; next < MIGRATIONS.length; next++) {
      const migration = MIGRATIONS[next]!;
      // PRAGMA foreign_keys is a no-op inside a transaction: switch it off before BEGIN.
      if (migration.rebuildsTables) this.db.pragma('foreign_keys = OFF');
      try {
        this.db
          .transaction(() => {
            this.db.exec(migration.sql);
            if (migration.rebuildsTables) {
              const broken = this.db.pragma('foreign_key_check') as unknown[];
              if (broken.length > 0)
                throw new Error(
                  `store migration ${next + 1} would break ${broken.length} foreign key reference(s); the store is left at version ${next}`,
                );
            }
            this.db.pragma(`user_version = ${next + 1}`);
          })
          .immediate();
      } finally {
        if (migration.rebuildsTables) this.db.pragma('foreign_keys = ON');
      }
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
    this.db
      .prepare('INSERT INTO meta (key, value) VALUES (?, ?) ON CONFLICT (key) DO UPDATE SET value = excluded.value')
      .run(key, value);
  }

  findFileByHash(sha256: string): StoredFile | undefined {
    return this.statements.fileByHash.get(sha256) as StoredFile | undefined;
  }

  /**
   * Opens the file's transaction (taking the write lock) and records the file. Returns its id.
   * Bytes refused before take over their earlier record.
   * @throws FileAlreadyStoredError when, once the lock is held, the same bytes are found stored:
   *   another process committed them while this one waited on the lock (the transaction is
   *   rolled back; the caller reports a duplicate).
   */
  beginFile(
    file: {
      name: string;
      sha256: string;
      kind: 'results' | 'ropes';
      labId: string | null;
      receivedAt: string;
      encodingNote: string;
      byteLength: number;
    },
    options: { reopen?: number } = {},
  ): number {
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
      throw error;
    }
    this.inFile = true;
    this.samplesThisFile.clear();
    this.db.exec('DELETE FROM temp.file_unplaced');
    this.effects = { sites: new Set(), resolved: [] };
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

  /**
   * The open file's record of a sample, creating the sample when it is new to the store. A sample
   * new to the store has no earlier report to supersede, which spares the look-up on most rows.
   */
  private sampleInFile(sampleId: string): SampleInFile {
    const known = this.samplesThisFile.get(sampleId);
    if (known) return known;
    // One statement for the common case: after a new sample try inserting first, after a known
    // one look it up first (a lab export of new samples; results for ropes already on a sheet).
    let created = this.lastSampleWasNew ? this.createSample(sampleId) : undefined;
    let stored: StoredSample | undefined;
    if (created === undefined) {
      stored = this.statements.sampleByText.get(sampleId) as StoredSample | undefined;
      if (stored === undefined) created = this.createSample(sampleId)!;
    }
    this.lastSampleWasNew = created !== undefined;
    const sample: SampleInFile = {
      key: created ?? stored!.id,
      hadResults: stored?.hasResults === 1,
      reported: [],
      ropedAt: stored?.siteId == null ? undefined : locationKey(stored as RopeLocation),
      ropeSiteId: stored?.siteId ?? undefined,
      patternTriedAt: undefined,
      patternRefusal: undefined,
      counted: false,
    };
    if (this.samplesThisFile.size >= SAMPLES_REMEMBERED) this.samplesThisFile.clear();
    this.samplesThisFile.set(sampleId, sample);
    return sample;
  }

  /** Creates the sample and returns its key, or undefined when it exists already. */
  private createSample(sampleId: string): number | undefined {
    const info = this.statements.insertSample.run(sampleId);
    return info.changes === 1 ? Number(info.lastInsertRowid) : undefined;
  }

  private reasonId(text: string): number {
    let id = this.reasonIds.get(text);
    if (id === undefined) {
      id =
        (this.statements.reasonByText.get(text) as number | undefined) ??
        Number(this.statements.insertReason.run(text).lastInsertRowid);
      if (this.reasonIds.size >= REASONS_REMEMBERED) this.reasonIds.clear();
      this.reasonIds.set(text, id);
    }
    return id;
  }

  /**
   * Stores a batch of result rows; links reissues to what they supersede. Call inside `beginFile`.
   *
   * A row whose sample ID encodes its pen and day (site sample pattern) is placed before it is
   * stored, so that each row is counted once: stored and placed, or refused and not stored. The
   * rope goes in when the pen is free that day; a pen that already holds another sample's rope
   * that day refuses the row (`pen-twice-same-day`: one rope per pen per day, and two sample IDs
   * for it are the lab's or the farm's to settle), as it refuses every row of that sample. A
   * sample that already hangs somewhere (a rope sheet says where) is placed there: the sheet
   * records what was hung, the encoded location is only what the label was printed for, so the
   * row is stored with a warning.
   * @param sampleIdField the file's header for the sample ID, named in refusals.
   */
  insertResults(fileId: number, rows: RowList<ResultRow>, sampleIdField = 'sample ID'): InsertCounts {
    this.requireFile();
    const counts = emptyCounts();
    for (let index = 0; index < rows.length; index++) {
      const row = rows.at(index)!;
      const sample = this.sampleInFile(row.sampleId);
      const rope = row.encodedRope;
      if (rope !== undefined && !this.placeEncodedRope(fileId, sample, row, rope, sampleIdField, counts)) continue;
      // What the receipt names row by row: the few rows read as invalid, called otherwise by the
      // lab, or read under a corrected sample ID (stored now or before).
      if (row.resultClass === 'invalid')
        counts.invalid.push({ line: row.line, sampleId: row.sampleId, assayId: row.assayId, reason: row.reason });
      if (row.callDiffers && row.labCall !== null && row.labCallClass !== null) {
        counts.callDisagreements.push({
          line: row.line,
          sampleId: row.sampleId,
          assayId: row.assayId,
          labCall: row.labCall,
          labCallClass: row.labCallClass,
          resultClass: row.resultClass,
          ctRaw: row.ctRaw,
        });
      }
      if (row.sampleIdAsWritten !== null)
        counts.idCorrections.push({ line: row.line, written: row.sampleIdAsWritten, meant: row.sampleId });
      const info = this.statements.insertResult.run(
        fileId,
        row.line,
        sample.key,
        row.labId,
        row.assayId,
        row.labAssay,
        row.ct,
        row.ctRaw,
        row.labCall,
        row.accession,
        row.collectedOn,
        row.reportedOn,
        // An S/P row has no Ct cutoffs: 0 in those NOT NULL columns (migration 5).
        row.reportStatus,
        row.control,
        row.resultClass,
        this.reasonId(row.reason),
        row.loadBand,
        row.positiveBelow ?? 0,
        row.suspectBelow ?? 0,
        row.cycleLimit ?? 0,
        row.callDiffers ? 1 : 0,
        row.contentKey,
        row.statusKind,
        row.statusWord,
        row.labCallClass,
        row.sampleIdAsWritten,
        row.measure,
        row.sp,
        row.positiveAtOrAbove,
        row.suspectAtOrAbove,
      );
      if (info.changes === 0) {
        counts.duplicates++;
        continue;
      }
      counts.inserted++;
      // Only a sample with earlier results in the store, or an earlier row of this assay and
      // lab in this file, can have a report for this row to supersede.
      const assayAndLab = `${row.assayId}|${row.labId}`;
      if (sample.hadResults || sample.reported.includes(assayAndLab))
        this.linkSupersessions(Number(info.lastInsertRowid), sample.key, row, counts);
      else sample.reported.push(assayAndLab);
      if (!sample.counted) {
        sample.counted = true;
        if (sample.ropeSiteId !== undefined) this.effects.sites.add(sample.ropeSiteId);
        else this.statements.noteUnplaced.run(sample.key);
      }
    }
    return counts;
  }

  /**
   * Places the rope a result row's sample ID encodes, or refuses the row (pushed to `counts`).
   * Returns whether the row may be stored. A sample's other assays carry the same location: it
   * is tried once per file, and its outcome repeated for them.
   */
  private placeEncodedRope(
    fileId: number,
    sample: SampleInFile,
    row: ResultRow,
    rope: RopeLocation,
    sampleIdField: string,
    counts: InsertCounts,
  ): boolean {
    const location = locationKey(rope);
    if (sample.ropedAt === location) return true;
    if (sample.patternTriedAt === location) {
      if (sample.patternRefusal === undefined) return true;
      counts.rejections.push({ ...sample.patternRefusal, line: row.line });
      return false;
    }
    sample.patternTriedAt = location;
    if (sample.ropedAt !== undefined) {
      counts.warnings.push(
        `line ${row.line}: sample ${row.sampleId} hangs in ${sample.ropedAt} by an earlier rope; its ID names ${location}: the result is placed where the rope hangs`,
      );
      return true;
    }
    const before = counts.rejections.length;
    const ropeRow: RopeRow = {
      siteId: rope.siteId,
      barnId: rope.barnId,
      penId: rope.penId,
      hungOn: rope.hungOn,
      sampleId: row.sampleId,
      line: row.line,
      note: null,
      sampleIdAsWritten: null,
      warning: undefined,
    };
    this.insertRopeRow(fileId, sample, ropeRow, 'sample-pattern', counts);
    if (counts.rejections.length === before) return true;
    // The refusal names the file's sample ID column: that is the cell that carries the location.
    const refusal = { ...counts.rejections[before]!, field: sampleIdField, value: row.sampleId };
    counts.rejections[before] = refusal;
    sample.patternRefusal = {
      field: refusal.field,
      code: refusal.code,
      value: refusal.value,
      message: refusal.message,
    };
    return false;
  }

  /**
   * Links a new row to the current rows of the same sample, assay and lab stored before it:
   * which stays current is decided by the reports' states and dates (supersede.ts): a
   * correction replaces, a preliminary report never replaces a final one, otherwise the later
   * report date wins. Every link is named in the receipt with both readings.
   */
  private linkSupersessions(newId: number, sampleKey: number, row: ResultRow, counts: InsertCounts): void {
    type Earlier = {
      id: number;
      reportedOn: string | null;
      status: ReportStatusKind | null;
      statusWord: string | null;
      resultClass: ResultClass;
      ctRaw: string;
      labCall: string | null;
    };
    const earlier = this.statements.currentBefore.all(sampleKey, row.assayId, row.labId, newId) as Earlier[];
    const next = { reportedOn: row.reportedOn, status: row.statusKind, statusWord: row.statusWord ?? row.reportStatus };
    const nextReading: ReportReading = {
      resultClass: row.resultClass,
      ctRaw: row.ctRaw,
      labCall: row.labCall,
      reportedOn: row.reportedOn,
      status: row.statusKind,
    };
    for (const old of earlier) {
      const decision = decideSupersession(old, next);
      const oldReading: ReportReading = {
        resultClass: old.resultClass,
        ctRaw: old.ctRaw,
        labCall: old.labCall,
        reportedOn: old.reportedOn,
        status: old.status,
      };
      counts.superseded++;
      const keepOld = decision.current === 'old';
      counts.supersessions.push({
        line: row.line,
        sampleId: row.sampleId,
        assayId: row.assayId,
        labId: row.labId,
        kind: decision.kind,
        thisFileCurrent: !keepOld,
        replaced: keepOld ? nextReading : oldReading,
        current: keepOld ? oldReading : nextReading,
        reason: decision.reason,
      });
      if (keepOld) {
        this.statements.insertSupersession.run(newId, old.id, decision.reason, decision.kind);
        break;
      }
      this.statements.insertSupersession.run(old.id, newId, decision.reason, decision.kind);
    }
  }

  private insertRopeRow(
    fileId: number,
    sample: SampleInFile,
    row: RopeRow,
    source: 'sheet' | 'sample-pattern',
    counts: InsertCounts,
    poolKey: number | null = null,
  ): void {
    const sampleKey = sample.key;
    // The common case is a new rope in a free pen: insert first, explain a refusal afterwards.
    const info = this.statements.insertRope.run(
      sampleKey,
      row.siteId,
      row.barnId,
      row.penId,
      row.hungOn,
      source,
      fileId,
      row.line,
      row.note,
      poolKey,
    );
    if (info.changes === 1) {
      if (source === 'sheet') counts.inserted++;
      if (row.warning) counts.warnings.push(`line ${row.line}: ${row.warning}`);
      sample.ropedAt = locationKey(row);
      sample.ropeSiteId = row.siteId;
      this.effects.sites.add(row.siteId);
      if (sample.hadResults) {
        this.effects.resolved.push(row.sampleId);
        if (this.effects.resolved.length >= 2 * RECEIPT_LIST_LIMIT)
          this.effects.resolved = this.effects.resolved.sort().slice(0, RECEIPT_LIST_LIMIT);
      }
      return;
    }
    const existing = this.statements.ropeBySample.get(sampleKey) as Omit<StoredRope, 'sampleId' | 'source'> | undefined;
    if (existing) {
      const same =
        existing.siteId === row.siteId &&
        existing.barnId === row.barnId &&
        existing.penId === row.penId &&
        existing.hungOn === row.hungOn;
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
    const clash = this.statements.ropeInPenOnDay.get(row.siteId, row.barnId, row.penId, row.hungOn, sampleKey) as
      | { sampleId: string }
      | undefined;
    const other = clash?.sampleId ?? '(another sample)';
    counts.rejections.push({
      line: row.line,
      field: 'pen',
      code: 'pen-twice-same-day',
      value: row.penId,
      message:
        source === 'sheet'
          ? `pen ${row.barnId}/${row.penId} already has sample ${other} on ${row.hungOn}; one rope per pen per day (hang a retest on another day or correct the sheet)`
          : `sample ${row.sampleId} names pen ${row.barnId}/${row.penId} on ${row.hungOn}, which already has sample ${other}; one rope per pen per day, so two sample IDs name one rope: the result is not stored (ask the lab which ID the tube carries)`,
    });
  }

  /** Stores a batch of rope-sheet rows. Call inside `beginFile`. */
  insertRopes(fileId: number, rows: readonly RopeRow[]): InsertCounts {
    this.requireFile();
    const counts = emptyCounts();
    for (const row of rows) {
      const sample = this.sampleInFile(row.sampleId);
      const poolId = row.poolId ?? null;
      if (poolId === null) {
        // A rope tested on its own whose ID already names a pool: one tube cannot be both.
        if (this.statements.ropeInPool.get(sample.key) !== undefined) {
          counts.rejections.push({
            line: row.line,
            field: 'sample_id',
            code: 'bad-pool',
            value: row.sampleId,
            message: `sample ${row.sampleId} is the ID of a pool of earlier ropes, so it cannot name a rope`,
          });
          continue;
        }
        this.insertRopeRow(fileId, sample, row, 'sheet', counts);
        continue;
      }
      const pool = this.sampleInFile(poolId);
      if (pool.ropedAt !== undefined) {
        counts.rejections.push({
          line: row.line,
          field: 'pool',
          code: 'bad-pool',
          value: poolId,
          message: `pool ID ${poolId} names the rope hung in ${pool.ropedAt}; a pool gets an ID of its own`,
        });
        continue;
      }
      this.insertRopeRow(fileId, sample, row, 'sheet', counts, pool.key);
      // Results reported under the pool ID before this sheet now have their ropes.
      if (pool.hadResults && !this.effects.resolved.includes(poolId)) this.effects.resolved.push(poolId);
    }
    return counts;
  }

  insertRejections(fileId: number, rejections: readonly RowRejection[]): void {
    this.requireFile();
    for (const r of rejections) {
      if (this.reopened && this.statements.rejectionExists.get(fileId, r.line, r.code) !== undefined) continue;
      this.statements.insertRejection.run(
        fileId,
        r.line,
        r.field ?? null,
        r.code,
        r.value ?? null,
        r.message,
        r.suggestedId ?? null,
        r.candidateIds?.join(' ') ?? null,
      );
    }
  }

  finishFile(fileId: number, counts: { accepted: number; rejected: number; duplicate: number }): void {
    this.requireFile();
    // A file read again adds the rows its corrections let in; its first counts stand.
    if (this.reopened)
      this.db.prepare('UPDATE files SET rows_accepted = rows_accepted + ? WHERE id = ?').run(counts.accepted, fileId);
    else this.statements.finishFile.run({ id: fileId, ...counts });
  }

  /**
   * The refused rows of a stored file that no result or rope of that file has taken the place
   * of since: what a confirmed sample-ID correction may let in when the file is read again.
   */
  openRefusals(fileId: number): { line: number; code: string; value: string | null }[] {
    return this.db
      .prepare(
        `SELECT j.line, j.code, j.value FROM rejected_rows j
         WHERE j.file_id = ?
           AND NOT EXISTS (SELECT 1 FROM results r WHERE r.file_id = j.file_id AND r.line = j.line)
           AND NOT EXISTS (SELECT 1 FROM ropes h WHERE h.file_id = j.file_id AND h.line = j.line)
         ORDER BY j.line`,
      )
      .all(fileId) as { line: number; code: string; value: string | null }[];
  }

  /**
   * What the open file changed, for its receipt: its result samples with no rope yet (at most
   * RECEIPT_LIST_LIMIT listed, all counted), earlier results its ropes now place, and the sites
   * it touched (gathered while storing; the samples that hang nowhere are looked up here).
   */
  openFileEffects(): { unresolved: string[]; unresolvedCount: number; resolved: string[]; sites: string[] } {
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
    // Planned sample IDs resolve to the plan's pen, a pool's result to its ropes' pens: their sites are touched too.
    const plannedSites = this.db
      .prepare(
        `SELECT p.site_id AS id FROM temp.file_unplaced f JOIN samples s ON s.id = f.sample JOIN planned_ropes p ON p.sample_id = s.sample_id OR p.pool_id = s.sample_id
         UNION SELECT h.site_id FROM temp.file_unplaced f JOIN ropes h ON h.pool = f.sample`,
      )
      .pluck()
      .all() as string[];
    return {
      unresolved: unresolved.map((row) => row.id),
      unresolvedCount: unresolved[0]?.n ?? 0,
      resolved: this.effects.resolved.sort().slice(0, RECEIPT_LIST_LIMIT),
      sites: [...new Set([...this.effects.sites, ...plannedSites])].sort(),
    };
  }

  /** Counts up the version of each site the open file changed: their outputs are now behind. */
  bumpSiteVersions(siteIds: readonly string[]): void {
    this.requireFile();
    const bump = this.db.prepare(
      'INSERT INTO site_versions (site_id, version) VALUES (?, 1) ON CONFLICT (site_id) DO UPDATE SET version = version + 1',
    );
    for (const siteId of siteIds) bump.run(siteId);
  }

  commit(): void {
    this.requireFile();
    this.db.exec('COMMIT');
    this.endFile();
  }

  rollback(): void {
    if (!this.inFile) return;
    this.db.exec('ROLLBACK');
    // Reasons first stored by the rolled-back file are gone with it.
    this.reasonIds.clear();
    this.endFile();
  }

  private endFile(): void {
    this.inFile = false;
    this.reopened = false;
    this.samplesThisFile.clear();
    this.db.pragma('foreign_keys = ON');
  }

  get fileOpen(): boolean {
    return this.inFile;
  }

  private requireFile(): void {
    if (!this.inFile) throw new Error('no file transaction is open: call beginFile first');
  }

  /** Records a refused file with its bytes and reason (or a new refusal of bytes refused before), in a transaction of its own. */
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

  // ---- Queries -------------------------------------------------------------------------------

  /**
   * Runs `read` in one read transaction: every query in it sees the same committed state, while
   * other processes go on writing (SQLite WAL readers never block the writer).
   */
  snapshot<T>(read: () => T): T {
    if (this.inFile) return read();
    return this.db.transaction(read).deferred();
  }

  /** How many committed files have changed the site (0 for none). */
  siteVersion(siteId: string): number {
    return (
      (this.db.prepare('SELECT version FROM site_versions WHERE site_id = ?').pluck().get(siteId) as
        | number
        | undefined) ?? 0
    );
  }

  /** What `outbox` shows of the site, or undefined when its outputs were never built there. */
  outputsBuilt(outbox: string, siteId: string): { siteVersion: number; configDigest: string } | undefined {
    return this.db
      .prepare(
        'SELECT site_version AS siteVersion, config_digest AS configDigest FROM outputs_built WHERE outbox = ? AND site_id = ?',
      )
      .get(outbox, siteId) as { siteVersion: number; configDigest: string } | undefined;
  }

  /** Every rope with a known location: rope sheets, sample patterns, and planned ropes whose results came back. */
  ropes(siteId?: string): StoredRope[] {
    const where = siteId === undefined ? '' : 'WHERE h.site_id = @siteId';
    const hung = this.db
      .prepare(
        `SELECT s.sample_id AS sampleId, h.site_id AS siteId, h.barn_id AS barnId, h.pen_id AS penId, h.hung_on AS hungOn, h.source, ps.sample_id AS poolId
         FROM ropes h JOIN samples s ON s.id = h.sample LEFT JOIN samples ps ON ps.id = h.pool ${where} ORDER BY h.hung_on, h.site_id, h.barn_id, h.pen_id`,
      )
      .all({ siteId }) as StoredRope[];
    // A planned rope counts as hung once a result for it (or for the pool the plan put it in,
    // unless a rope sheet names that pool) arrives: on its collection date, else its due date.
    const planned = this.db
      .prepare(
        `SELECT p.sample_id AS sampleId, p.site_id AS siteId, p.barn_id AS barnId, p.pen_id AS penId,
                COALESCE(MIN(r.collected_on), p.due_on) AS hungOn, 'plan' AS source, p.pool_id AS poolId
         FROM planned_ropes p LEFT JOIN samples s ON s.sample_id = p.sample_id LEFT JOIN samples ps ON ps.sample_id = p.pool_id
           -- A pool that a rope sheet names holds the sheet's ropes: the sheet says what was hung.
           JOIN results r ON r.sample = s.id OR (r.sample = ps.id AND NOT EXISTS (SELECT 1 FROM ropes h2 WHERE h2.pool = ps.id))
         WHERE NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample = s.id) ${siteId === undefined ? '' : 'AND p.site_id = @siteId'}
         GROUP BY p.sample_id`,
      )
      .all({ siteId }) as StoredRope[];
    return [...hung, ...planned];
  }

  /**
   * Results that no later report supersedes; with a site, only those whose sample is one of the
   * site's ropes or planned ropes (so rewriting one site's outputs never reads the whole store).
   */
  currentResults(siteId?: string): StoredResult[] {
    const ofSite =
      siteId === undefined
        ? ''
        : `AND r.sample IN (SELECT sample FROM ropes WHERE site_id = @siteId
             UNION SELECT pool FROM ropes WHERE site_id = @siteId AND pool IS NOT NULL
             UNION SELECT s.id FROM planned_ropes p JOIN samples s ON s.sample_id = p.sample_id OR s.sample_id = p.pool_id WHERE p.site_id = @siteId)`;
    return this.db
      .prepare(
        `SELECT r.id, r.file_id AS fileId, r.lab_id AS labId, s.sample_id AS sampleId, r.assay_id AS assayId, r.measure, r.ct, r.sp, r.ct_raw AS ctRaw, r.lab_call AS labCall,
                r.accession, r.collected_on AS collectedOn, r.reported_on AS reportedOn, r.class AS resultClass, x.text AS reason, r.load_band AS loadBand,
                CASE WHEN r.measure = 'ct' THEN r.positive_below END AS positiveBelow, CASE WHEN r.measure = 'ct' THEN r.suspect_below END AS suspectBelow,
                CASE WHEN r.measure = 'ct' THEN r.cycle_limit END AS cycleLimit, r.positive_at_or_above AS positiveAtOrAbove, r.suspect_at_or_above AS suspectAtOrAbove,
                r.call_differs AS callDiffers
         FROM results r JOIN samples s ON s.id = r.sample JOIN reasons x ON x.id = r.reason
         WHERE NOT EXISTS (SELECT 1 FROM supersessions o WHERE o.old_result_id = r.id) ${ofSite}
         ORDER BY r.id`,
      )
      .all(siteId === undefined ? {} : { siteId })
      .map((row) => ({ ...(row as StoredResult), callDiffers: Boolean((row as { callDiffers: number }).callDiffers) }));
  }

  supersessions(): Supersession[] {
    return this.db
      .prepare('SELECT old_result_id AS oldResultId, new_result_id AS newResultId, reason FROM supersessions')
      .all() as Supersession[];
  }

  /**
   * Every link between two reports of one of the site's samples (a rope or a planned rope of the
   * site), with both readings, from the view `supersession_readings`: `replaced` is the report
   * no longer current, `inPlace` the one current in its place at the time of the link. In the
   * order the links were made.
   */
  replacedReports(siteId: string): ReplacedReport[] {
    const rows = this.db
      .prepare(
        `SELECT v.sample_id AS sampleId, v.assay_id AS assayId, v.lab_id AS labId, v.kind, v.reason,
                v.old_class AS oldClass, v.old_ct AS oldCt, v.old_ct_raw AS oldCtRaw, v.old_lab_call AS oldLabCall, v.old_reported_on AS oldReportedOn,
                v.old_report_status AS oldReportStatus, v.old_status_kind AS oldStatus, (SELECT o.status_word FROM results o WHERE o.id = v.old_result_id) AS oldStatusWord,
                v.new_class AS newClass, v.new_ct AS newCt, v.new_ct_raw AS newCtRaw, v.new_lab_call AS newLabCall, v.new_reported_on AS newReportedOn,
                v.new_report_status AS newReportStatus, v.new_status_kind AS newStatus, v.new_status_word AS newStatusWord
         FROM supersession_readings v
         WHERE v.sample_id IN (SELECT s.sample_id FROM ropes h JOIN samples s ON s.id = h.sample WHERE h.site_id = @siteId
                               UNION SELECT sample_id FROM planned_ropes WHERE site_id = @siteId)
         ORDER BY MAX(v.old_result_id, v.new_result_id), MIN(v.old_result_id, v.new_result_id)`,
      )
      .all({ siteId }) as Record<string, string | number | null>[];
    const reading = (row: Record<string, string | number | null>, side: 'old' | 'new'): StoredReading => ({
      resultClass: row[`${side}Class`] as ResultClass,
      ct: row[`${side}Ct`] as number | null,
      ctRaw: (row[`${side}CtRaw`] as string | null) ?? '',
      labCall: row[`${side}LabCall`] as string | null,
      reportedOn: row[`${side}ReportedOn`] as string | null,
      status: row[`${side}Status`] as ReportStatusKind | null,
      statusWord: (row[`${side}StatusWord`] as string | null) ?? (row[`${side}ReportStatus`] as string | null),
    });
    return rows.map((row) => ({
      sampleId: row.sampleId as string,
      assayId: row.assayId as string,
      labId: row.labId as string,
      kind: row.kind as SupersessionKind | null,
      reason: row.reason as string,
      replaced: reading(row, 'old'),
      inPlace: reading(row, 'new'),
    }));
  }

  /**
   * Refused rows whose sample ID failed its check character and that name, as the ID they most
   * likely meant (`suggested_id`), a planned rope of the site still without a result, and that
   * no row of their file has taken the place of since (a confirmed correction read in again
   * stores a result on that line, possibly under another planned ID). By file and line.
   */
  mistypedRefusals(siteId: string): MistypedRefusal[] {
    // The planned rope's result is looked up by sample (indexed) first; results have no index by
    // file and line, so that scan runs only for the few refusals still waiting.
    return this.db
      .prepare(
        `WITH waiting AS MATERIALIZED (
           SELECT j.id, j.file_id, j.line, j.value, j.suggested_id
           FROM rejected_rows j JOIN planned_ropes p ON p.sample_id = j.suggested_id
           WHERE j.code = 'bad-check-character' AND p.site_id = ?
             AND NOT EXISTS (SELECT 1 FROM samples s JOIN results r ON r.sample = s.id WHERE s.sample_id = p.sample_id)
         )
         SELECT COALESCE(w.value, '') AS written, w.suggested_id AS suggestedId, f.name AS fileName, w.line
         FROM waiting w JOIN files f ON f.id = w.file_id
         WHERE NOT EXISTS (SELECT 1 FROM results r WHERE r.file_id = w.file_id AND r.line = w.line)
         ORDER BY w.file_id, w.line, w.id`,
      )
      .all(siteId) as MistypedRefusal[];
  }

  /** Sample IDs of current results with no known rope (not on any sheet, pattern or plan). */
  unresolvedSampleIds(): string[] {
    return (
      this.db
        .prepare(
          `SELECT s.sample_id AS sampleId FROM samples s
           WHERE EXISTS (SELECT 1 FROM results r WHERE r.sample = s.id)
             AND NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample = s.id)
             AND NOT EXISTS (SELECT 1 FROM planned_ropes p WHERE p.sample_id = s.sample_id)
           ORDER BY s.sample_id`,
        )
        .all() as { sampleId: string }[]
    ).map((row) => row.sampleId);
  }

  plannedRopes(siteId?: string): PlannedRope[] {
    return this.db
      .prepare(
        `SELECT sample_id AS sampleId, site_id AS siteId, barn_id AS barnId, pen_id AS penId, side, reason, due_on AS dueOn,
                planned_at AS plannedAt, after_round AS afterRound, pool_id AS poolId FROM planned_ropes ${siteId === undefined ? '' : 'WHERE site_id = ?'} ORDER BY sample_id`,
      )
      .all(...(siteId === undefined ? [] : [siteId])) as PlannedRope[];
  }

  /** Sample IDs of planned ropes for which no result has come back. */
  plannedWithoutResults(siteId: string): PlannedRope[] {
    return this.db
      .prepare(
        `SELECT sample_id AS sampleId, site_id AS siteId, barn_id AS barnId, pen_id AS penId, side, reason, due_on AS dueOn,
                planned_at AS plannedAt, after_round AS afterRound, pool_id AS poolId
         FROM planned_ropes p WHERE site_id = ? AND NOT EXISTS (SELECT 1 FROM samples s JOIN results r ON r.sample = s.id WHERE s.sample_id = p.sample_id OR s.sample_id = p.pool_id)
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
    return this.db
      .prepare('SELECT line, field, code, value, message FROM rejected_rows WHERE file_id = ? ORDER BY line')
      .all(fileId) as RowRejection[];
  }

  counts(): {
    files: number;
    rejectedFiles: number;
    results: number;
    currentResults: number;
    ropes: number;
    rejectedRows: number;
    planned: number;
  } {
    const one = (sql: string) => (this.db.prepare(sql).get() as { n: number }).n;
    return {
      files: one('SELECT COUNT(*) AS n FROM files'),
      rejectedFiles: one("SELECT COUNT(*) AS n FROM files WHERE status = 'rejected'"),
      results: one('SELECT COUNT(*) AS n FROM results'),
      currentResults: one(
        'SELECT COUNT(*) AS n FROM results r WHERE NOT EXISTS (SELECT 1 FROM supersessions s WHERE s.old_result_id = r.id)',
      ),
      ropes: one('SELECT COUNT(*) AS n FROM ropes'),
      rejectedRows: one('SELECT COUNT(*) AS n FROM rejected_rows'),
      planned: one('SELECT COUNT(*) AS n FROM planned_ropes'),
    };
  }
}
