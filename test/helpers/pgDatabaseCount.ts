/**
 * How many PostgreSQL databases this test file has made (test/helpers/testStore.ts,
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
