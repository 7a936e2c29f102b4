/**
 * Opening the SQLite store (better-sqlite3 12): the path is checked before SQLite sees it, the
 * connection gets its pragmas (WAL, synchronous FULL, foreign keys, a busy timeout), a cheap probe
 * tells a damaged file or another program's database from a store, and the numbered migrations
 * bring the schema up to date (version in PRAGMA user_version).
 */
import Database from 'better-sqlite3';
import fs from 'node:fs';
import path from 'node:path';
import { DEFAULT_PATHS } from '../workspacePaths.js';
import { MIGRATION_FUNCTIONS, MIGRATIONS } from './migrations.js';

export interface StoreOptions {
  busyTimeoutMs?: number;
  /** Create the file when it does not exist (default). Commands that only read pass false. */
  create?: boolean;
}

/** The store file cannot be used: missing, a folder, not SQLite, damaged. The message names the file. */
export class StoreOpenError extends Error {
  override readonly name = 'StoreOpenError';
  readonly code = 'store-open';
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
    throw new StoreOpenError(file, `is a folder; --db takes the store file (for example ${DEFAULT_PATHS.db})`);
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

/**
 * Opens (or, unless `create` is false, creates) the store's database and brings its schema up to date.
 * @throws StoreOpenError naming the file when it is missing (and may not be created), a folder,
 *   not SQLite, damaged, or a SQLite database of another program.
 */
export function openDatabase(file: string, options: StoreOptions = {}): Database.Database {
  const create = options.create ?? true;
  if (file !== ':memory:') checkStoreFile(file, create);
  let opened: Database.Database | undefined;
  try {
    opened = new Database(file, { fileMustExist: !create });
    setPragmas(opened, options);
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
    migrate(opened);
    return opened;
  } catch (error) {
    opened?.close();
    if (error instanceof StoreOpenError) throw error;
    const detail = damageDetail(error);
    throw detail === undefined ? error : new StoreOpenError(file, detail);
  }
}

/**
 * The page size of a new store, in bytes (SQLite's default is 4096). A lab export is stored in
 * one transaction that appends to a handful of B-trees: with 16 KB pages it writes a quarter of
 * the pages and page headers, splits a quarter as often and commits its WAL frames in a quarter
 * of the writes (on the bench's 1M-row export about a tenth less of SQLite's CPU time, its commit
 * about half). Only an empty database takes it (sqlite.org/pragma.html#pragma_page_size): a
 * store created before keeps its pages.
 */
export const NEW_STORE_PAGE_SIZE = 16_384;

function setPragmas(db: Database.Database, options: StoreOptions): void {
  // Before WAL: a database in WAL mode never changes its page size.
  if (db.pragma('page_count', { simple: true }) === 0) db.pragma(`page_size = ${NEW_STORE_PAGE_SIZE}`);
  db.pragma('journal_mode = WAL');
  // A file is archived only after its commit, so the commit must survive a power cut.
  db.pragma('synchronous = FULL');
  db.pragma('foreign_keys = ON');
  // A 16 MB page cache (default 2 MB) keeps the hot index pages of a large export in memory
  // while it is stored, and bounds what the store adds to the process.
  db.pragma('cache_size = -16384');
  db.pragma(`busy_timeout = ${options.busyTimeoutMs ?? 120_000}`);
}

function migrate(db: Database.Database): void {
  const version = db.pragma('user_version', { simple: true }) as number;
  if (version >= MIGRATIONS.length) return;
  for (const [name, fn] of Object.entries(MIGRATION_FUNCTIONS)) db.function(name, { deterministic: true }, fn);
  for (let next = version; next < MIGRATIONS.length; next++) {
    const migration = MIGRATIONS[next]!;
    // PRAGMA foreign_keys is a no-op inside a transaction: switch it off before BEGIN.
    if (migration.rebuildsTables) db.pragma('foreign_keys = OFF');
    try {
      db.transaction(() => {
        db.exec(migration.sql);
        if (migration.rebuildsTables) {
          const broken = db.pragma('foreign_key_check') as unknown[];
          if (broken.length > 0)
            throw new Error(
              `store migration ${next + 1} would break ${broken.length} foreign key reference(s); the store is left at version ${next}`,
            );
        }
        db.pragma(`user_version = ${next + 1}`);
      }).immediate();
    } finally {
      if (migration.rebuildsTables) db.pragma('foreign_keys = ON');
    }
  }
}
