import type { SiteFacts, StoreBackend, TidyCells, TidyRange, TidyView } from '../../domain/store.js';
import { ComposedStore } from '../composedStore.js';
import { redactedLocation } from '../location.js';
import { StoreOpenError, type StoreOptions } from '../open.js';
import { migratePg, pgSchemaVersion } from './migrations.js';
import { PgStoreReader } from './reader.js';
import { PgError, SyncConnection } from './syncConnection.js';
import { lockSitesPg, replaceSiteFactsPg, tidyRowsPg } from './tidyFacts.js';
import { PgWriter } from './writer.js';

export class PgStore extends ComposedStore {
  readonly conn: SyncConnection;

  /** On an open connection whose schema is up to date (see openPgStore). */
  constructor(conn: SyncConnection) {
    // Reads inside an open file see it; the writer asks the reader for a file by its bytes.
    let writer: PgWriter | undefined;
    const reader = new PgStoreReader(conn, () => writer?.fileOpen ?? false);
    writer = new PgWriter(conn, (sha256) => reader.findFileByHash(sha256));
    super(writer, reader);
    this.conn = conn;
  }

  /** Rolls back an open file and ends the connection. */
  close(): void {
    try {
      this.rollback();
    } finally {
      this.conn.close();
    }
  }

  // ---- Tidy facts and site locks (tidyFacts.ts) ----------------------------------------------

  replaceSiteFacts(siteId: string, facts: SiteFacts, fromRound = 1): void {
    replaceSiteFactsPg(this.conn, siteId, facts, fromRound);
  }
  tidyRows(view: TidyView, siteId: string, range: TidyRange = {}): TidyCells {
    return tidyRowsPg(this.conn, view, siteId, range);
  }
  lockSites(siteIds: readonly string[]): () => void {
    return lockSitesPg(this.conn, siteIds);
  }
}

/**
 * Opens the PostgreSQL store at `url` and brings its schema up to date; with `create: false`, a
 * database without the store's schema is refused rather than given one.
 * @throws StoreOpenError naming the store (never its password) when it cannot be reached or used.
 */
export function openPgStore(url: string, options: StoreOptions = {}): StoreBackend {
  const shown = redactedLocation(url);
  let conn: SyncConnection | undefined;
  try {
    conn = new SyncConnection(url);
    if (options.create === false && pgSchemaVersion(conn) === 0)
      throw new StoreOpenError(shown, 'holds no ropewatch store (no schema); nothing was created');
    migratePg(conn);
    return new PgStore(conn);
  } catch (error) {
    conn?.close();
    if (!(error instanceof PgError)) throw error;
    throw new StoreOpenError(shown, `cannot be opened (PostgreSQL ${error.code}: ${error.message})`);
  }
}
