/**
 * Which store the tests run against. The suite runs twice over the tests that touch the store
 * (vitest.config.ts, projects `sqlite` and `postgres`): in the second, ROPEWATCH_TEST_STORE is
 * `postgres` and every store a test makes is a new, empty database on the run's PostgreSQL server
 * (test/helpers/pgServer.ts) instead of a SQLite file.
 */
import { inject } from 'vitest';
import type { StoreBackend } from '../../src/domain/store.js';
import { parseStoreLocation } from '../../src/store/location.js';
import type { StoreOptions } from '../../src/store/open.js';
import { openStore } from '../../src/store/openStore.js';
import { SyncConnection } from '../../src/store/pg/syncConnection.js';
import { newDatabaseName, noteDatabaseMade } from './pgDatabaseCount.js';
import { withDatabase } from './pgServerStart.js';

export const TEST_STORE_ENV = 'ROPEWATCH_TEST_STORE';
export type TestBackend = 'sqlite' | 'postgres';

/** The backend this test run's stores are on. */
export function testBackend(env: NodeJS.ProcessEnv = process.env): TestBackend {
  return env[TEST_STORE_ENV] === 'postgres' ? 'postgres' : 'sqlite';
}

export interface TestStoreLocation {
  /** What `--db` takes: the SQLite file, or the new database's URL. */
  location: string;
  /** Removes the database (PostgreSQL; a SQLite file goes with its folder). */
  drop: () => void;
}

/** Runs `body` on a synchronous connection to the test server's maintenance database. */
function onServer<T>(body: (conn: SyncConnection) => T): T {
  const conn = new SyncConnection(inject('pgUrl'));
  try {
    return body(conn);
  } finally {
    conn.close();
  }
}

/**
 * A new, empty database on the test server, made synchronously (tests open workspaces
 * synchronously), named uniquely for this process.
 */
export function freshDatabaseSync(label = 'store'): TestStoreLocation & { name: string } {
  const name = newDatabaseName(label);
  onServer((conn) => conn.query(`CREATE DATABASE "${name}"`));
  noteDatabaseMade();
  return {
    name,
    location: withDatabase(inject('pgUrl'), name),
    drop: () => onServer((conn) => conn.query(`DROP DATABASE IF EXISTS "${name}" WITH (FORCE)`)),
  };
}

/** Where a test's store goes: `sqliteFile` on SQLite, a new database on PostgreSQL. */
export function testStoreLocation(sqliteFile: string, label = 'store'): TestStoreLocation {
  if (testBackend() === 'sqlite') return { location: sqliteFile, drop: () => {} };
  return freshDatabaseSync(label);
}

/**
 * As `testStoreLocation`, with the PostgreSQL database made when its location is first read: a
 * workspace whose store no test reaches (a test of its config folder) makes no database.
 */
export function lazyTestStoreLocation(sqliteFile: string, label = 'store'): TestStoreLocation {
  if (testBackend() === 'sqlite') return { location: sqliteFile, drop: () => {} };
  let place: TestStoreLocation | undefined;
  return {
    get location() {
      place ??= freshDatabaseSync(label);
      return place.location;
    },
    drop: () => place?.drop(),
  };
}

/**
 * Tests of SQLite itself (its numbered migrations from older SQLite stores, its pragmas, its query
 * plans): defined on the SQLite run only. No PostgreSQL store was ever at those versions; the
 * PostgreSQL schema has its own tests (test/store/pg).
 */
export function sqliteOnly(define: () => void): void {
  if (testBackend() === 'sqlite') define();
}

/**
 * A store of its own for one test, on the test backend: SQLite at `sqliteFile` (in memory by
 * default), or a new PostgreSQL database that is dropped when the store is closed.
 */
export function openTestStore(sqliteFile = ':memory:', options: StoreOptions = {}): StoreBackend {
  const place = testStoreLocation(sqliteFile, 'own');
  const store = openStore(parseStoreLocation(place.location), options);
  const close = store.close.bind(store);
  store.close = () => {
    close();
    place.drop();
  };
  return store;
}

/**
 * A copy of a test store: on SQLite the copied file at `sqliteCopy` (the caller copied it), on
 * PostgreSQL a new database made from the store's as its template (CREATE DATABASE ... TEMPLATE,
 * PostgreSQL 17 documentation, 22.3: the template may have no other connection meanwhile).
 */
export function copyTestStore(location: string, sqliteCopy: string): string {
  if (testBackend() === 'sqlite') return sqliteCopy;
  const from = decodeURIComponent(new URL(location).pathname.slice(1));
  const name = newDatabaseName('copy');
  onServer((conn) => conn.query(`CREATE DATABASE "${name}" TEMPLATE "${from}"`));
  noteDatabaseMade();
  return withDatabase(inject('pgUrl'), name);
}
