/**
 * Plain SQL on a test's store, whichever backend it is on: tests that look at the store's tables
 * directly (a count, a column the interface does not return) ask the same question of both.
 * Parameters are positional (`?`); on PostgreSQL they become `$1, $2 ...`.
 */
import type { StoreBackend } from '../../src/domain/store.js';
import { PgStore } from '../../src/store/pg/store.js';
import type { SqlValue } from '../../src/store/pg/syncConnection.js';
import { Store } from '../../src/store/store.js';

export interface StoreSql {
  all<Row = Record<string, unknown>>(sql: string, ...params: SqlValue[]): Row[];
  get<Row = Record<string, unknown>>(sql: string, ...params: SqlValue[]): Row | undefined;
  /** Runs a statement; the number of rows it changed. */
  run(sql: string, ...params: SqlValue[]): number;
}

/** `?` placeholders as PostgreSQL's numbered ones (the tests' SQL has no `?` inside a literal). */
function numbered(sql: string): string {
  let n = 0;
  return sql.replace(/\?/g, () => `$${++n}`);
}

export function storeSql(store: StoreBackend): StoreSql {
  if (store instanceof Store) {
    const { db } = store;
    return {
      all: <Row>(sql: string, ...params: SqlValue[]) => db.prepare(sql).all(...params) as Row[],
      get: <Row>(sql: string, ...params: SqlValue[]) => db.prepare(sql).get(...params) as Row | undefined,
      run: (sql, ...params) => db.prepare(sql).run(...params).changes,
    };
  }
  if (store instanceof PgStore) {
    const { conn } = store;
    return {
      all: <Row>(sql: string, ...params: SqlValue[]) => conn.query<Row>(numbered(sql), params).rows,
      get: <Row>(sql: string, ...params: SqlValue[]) => conn.query<Row>(numbered(sql), params).rows[0],
      run: (sql, ...params) => conn.query(numbered(sql), params).rowCount,
    };
  }
  throw new Error('storeSql: a store of an unknown kind');
}

/** The SQLite store under a test that is about SQLite itself. @throws on any other backend. */
export function sqliteStore(store: StoreBackend): Store {
  if (!(store instanceof Store)) throw new Error('this check reads SQLite itself and needs a SQLite store');
  return store;
}

/**
 * Rows that break a foreign key. SQLite: PRAGMA foreign_key_check (sqlite.org/pragma.html; a
 * file's rows are stored with the per-row checks off). PostgreSQL checks every declared key on
 * each write (PostgreSQL 17 documentation, 5.5.5 Foreign Keys): the only way around that is a
 * constraint added NOT VALID, so the keys not validated are listed instead.
 */
export function foreignKeyProblems(store: StoreBackend): unknown[] {
  if (store instanceof Store) return store.db.pragma('foreign_key_check') as unknown[];
  return storeSql(store).all("SELECT conname FROM pg_constraint WHERE contype = 'f' AND NOT convalidated");
}
