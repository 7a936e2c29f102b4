/**
 * The names of the PostgreSQL databases tests make, and how many this test file has made (test/helpers/testStore.ts,
 * test/helpers/pgServer.ts), so the `postgres` project can tell a file that opens a store there
 * from one that only repeats the SQLite run (test/helpers/pgStoreOpened.ts). Kept on globalThis:
 * one count per worker process, reset as each file starts.
 */
const KEY = Symbol.for('ropewatch.test.pgDatabasesMade');
type Counted = { [KEY]?: number };

/** Counts one database made on the test server. */
export function noteDatabaseMade(): void {
  const counted = globalThis as Counted;
  counted[KEY] = (counted[KEY] ?? 0) + 1;
}

/** The databases made since the last reset. */
export function databasesMade(): number {
  return (globalThis as Counted)[KEY] ?? 0;
}

export function resetDatabasesMade(): void {
  (globalThis as Counted)[KEY] = 0;
}

let named = 0;

/** A database name unique on the test server: the label, this process and a count. */
export function newDatabaseName(label: string): string {
  named += 1;
  return `rw_${label.replace(/[^a-z0-9]/gi, '_').toLowerCase()}_${process.pid}_${named}_${Date.now().toString(36)}`;
}
