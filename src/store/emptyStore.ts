/**
 * A store's contents removed, for the demo's fresh start: a SQLite file goes with its `-wal` and
 * `-shm` files; a PostgreSQL database keeps its schema and has every ropewatch table emptied (its
 * row ids start again from 1), in one transaction.
 */
import fs from 'node:fs';
import { redactedLocation, type StoreLocation } from './location.js';
import { StoreOpenError } from './open.js';
import { COPIED_TABLES } from './pg/copyTables.js';
import { migratePg } from './pg/migrations.js';
import { PgError, quoteIdentifier, SyncConnection } from './pg/syncConnection.js';

/** The files SQLite keeps for a store beside the store itself. */
const SQLITE_SIDE_FILES = ['-wal', '-shm'];

/**
 * Empties the store at `location` (a missing SQLite file is already empty).
 * @throws StoreOpenError naming the database (never its password) when PostgreSQL cannot be reached.
 */
export function emptyStore(location: StoreLocation): void {
  if (location.kind === 'sqlite') {
    for (const suffix of ['', ...SQLITE_SIDE_FILES]) fs.rmSync(`${location.file}${suffix}`, { force: true });
    return;
  }
  let conn: SyncConnection | undefined;
  try {
    conn = new SyncConnection(location.url);
    migratePg(conn);
    const tables = COPIED_TABLES.map((table) => quoteIdentifier(table.name)).join(', ');
    const open = conn;
    open.transaction(() => open.query(`TRUNCATE ${tables} RESTART IDENTITY`));
  } catch (error) {
    if (!(error instanceof PgError)) throw error;
    throw new StoreOpenError(
      redactedLocation(location.url),
      `cannot be emptied (PostgreSQL ${error.code}: ${error.message})`,
    );
  } finally {
    conn?.close();
  }
}
