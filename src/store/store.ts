/**
 * The SQLite store (better-sqlite3 12), as one object: its writer (writer.ts: one transaction
 * per input file, beginFile ... commit) and its reader (reader.ts: the read queries) over one
 * connection opened by open.ts. It implements `StoreBackend` (src/domain/store.ts), the
 * interface another backend would implement too; ingest and the outputs know only that.
 */
import type Database from 'better-sqlite3';
import type { SiteFacts, TidyCells, TidyRange, TidyView } from '../domain/store.js';
import { ComposedStore } from './composedStore.js';
import { openDatabase, type StoreOptions } from './open.js';
import { SqliteReader } from './reader.js';
import { readTidyView, replaceSiteFacts } from './tidyFacts.js';
import { SqliteWriter } from './writer.js';

export type {
  CallDisagreement,
  IdCorrectionNote,
  InsertCounts,
  InvalidNote,
  SupersessionNote,
} from '../domain/store.js';
export { FileAlreadyStoredError, RECEIPT_LIST_LIMIT } from '../domain/store.js';
export type {
  MistypedRefusal,
  PlannedRope,
  ReplacedReport,
  ReportReading,
  StoredFile,
  StoredReading,
  StoredResult,
  StoredRope,
  Supersession,
} from '../domain/records.js';
export { StoreOpenError, type StoreOptions } from './open.js';

export class Store extends ComposedStore {
  readonly db: Database.Database;

  /**
   * Opens (or, unless `create` is false, creates) the store and brings its schema up to date.
   * @throws StoreOpenError naming the file when it is missing (and may not be created), a folder,
   *   not SQLite, damaged, or a SQLite database of another program.
   */
  constructor(file: string, options: StoreOptions = {}) {
    const db = openDatabase(file, options);
    const writer = new SqliteWriter(db);
    super(writer, new SqliteReader(db, () => writer.fileOpen));
    this.db = db;
  }

  close(): void {
    this.rollback();
    this.db.close();
  }

  // ---- Tidy facts (tidyFacts.ts) -------------------------------------------------------------

  replaceSiteFacts(siteId: string, facts: SiteFacts, fromRound = 1): void {
    replaceSiteFacts(this.db, siteId, facts, fromRound);
  }
  tidyRows(view: TidyView, siteId: string, range: TidyRange = {}): TidyCells {
    return readTidyView(this.db, view, siteId, range);
  }
  /** Nothing to take: SQLite's write lock and the outbox's lock file per site (src/outputs.ts) serve. */
  lockSites(_siteIds: readonly string[]): () => void {
    return () => {};
  }
}
