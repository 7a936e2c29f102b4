/**
 * The README's "Reading the store from R or Python" for PostgreSQL, run as written: the demo's
 * store copied into a PostgreSQL database, the README's SQL creating the analysts' role, then the
 * R and Python snippets' queries run as that role. They give the rows the same queries give on the
 * SQLite store, and the role reads the views and nothing else.
 *
 * Privileges: PostgreSQL 17 documentation, GRANT (a role holds only the privileges granted to it,
 * SELECT on a view does not grant SELECT on its tables) and SQLSTATE 42501
 * (insufficient_privilege, Appendix A).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PgError, SyncConnection } from '../../../src/store/pg/syncConnection.js';
import { freshDatabase, type TestDatabase, withAdmin } from '../../helpers/pgServer.js';
import { readmeSection, readmeSnippet } from '../../helpers/readme.js';
import { runCli } from '../../helpers/runCli.js';

const SECTION = readmeSection('### PostgreSQL', readmeSection('## Reading the store from R or Python'));
/** Roles belong to the whole server: this run's analyst gets a name of its own. */
const ROLE = `analyst_${process.pid}_${Date.now().toString(36)}`;
const ROLE_PASSWORD = 'change-me-too';

let dir: string;
let demoStore: string;
let target: TestDatabase;

beforeAll(async () => {
  dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-analyst-'));
  const demo = await runCli(['demo'], { cwd: dir });
  expect(demo.code, demo.stderr).toBe(0);
  demoStore = path.join(dir, 'data', 'ropewatch.db');
  target = await freshDatabase('views');
  const copied = await runCli(['store', 'copy', '--from', demoStore, '--to', target.url]);
  expect(copied.code, copied.stderr).toBe(0);
  // The README's statements as an administrator would paste them, for this database and role.
  const grants = readmeSnippet(SECTION, 'sql')
    .replaceAll('DATABASE ropewatch', `DATABASE "${target.name}"`)
    .replace(/\banalyst\b/g, ROLE);
  await withAdmin(target.url, (client) => client.query(grants));
}, 300_000);

afterAll(async () => {
  if (target !== undefined) {
    await target.drop();
    await withAdmin(target.url.replace(/\/[^/]*$/, '/postgres'), (client) =>
      client.query(`DROP ROLE IF EXISTS "${ROLE}"`),
    );
  }
  if (dir !== undefined) fs.rmSync(dir, { recursive: true, force: true });
});

/** The snippet's one query (the first double-quoted SELECT). */
function queryOf(language: 'r' | 'python'): string {
  const match = /"(SELECT [^"]+)"/.exec(readmeSnippet(SECTION, language));
  expect(match, `${language} query in the README`).not.toBeNull();
  return match![1]!;
}

function asAnalyst<T>(body: (conn: SyncConnection) => T): T {
  const url = new URL(target.url);
  url.username = ROLE;
  url.password = ROLE_PASSWORD;
  const conn = new SyncConnection(url.toString());
  try {
    return body(conn);
  } finally {
    conn.close();
  }
}

function onSqlite(sql: string, site: string): Record<string, unknown>[] {
  const db = new Database(demoStore, { readonly: true });
  try {
    return db.prepare(sql).all(site) as Record<string, unknown>[];
  } finally {
    db.close();
  }
}

/**
 * A row as SQLite gives it: SQLite has no boolean and no separate float type, so PostgreSQL's
 * values are compared as the numbers SQLite holds (a whole double such as 1.0 is 1 in both).
 */
function asSqliteValues(row: Record<string, unknown>): Record<string, unknown> {
  return Object.fromEntries(
    Object.entries(row).map(([key, value]) => [key, typeof value === 'boolean' ? Number(value) : value]),
  );
}

describe("the README's PostgreSQL queries for analysts", () => {
  it('R (RPostgres, $1 parameters): tidy_rounds of a site, the rows SQLite gives', () => {
    const sql = queryOf('r');
    const rows = asAnalyst((conn) => conn.query(sql, ['hollow-creek']).rows);
    // The demo's store holds rounds of that site (its outbox has rounds.csv rows): an empty answer proves nothing.
    expect(rows.length).toBeGreaterThan(0);
    expect(rows.map(asSqliteValues)).toEqual(onSqlite(sql.replace('$1', '?'), 'hollow-creek'));
  });

  it('Python (psycopg, %s parameters): current results of a site, the rows SQLite gives', () => {
    const sql = queryOf('python');
    const rows = asAnalyst((conn) => conn.query(sql.replace('%s', '$1'), ['hollow-creek']).rows);
    expect(rows.length).toBeGreaterThan(0);
    expect(rows.map(asSqliteValues)).toEqual(onSqlite(sql.replace('%s', '?'), 'hollow-creek'));
  });

  it('the role reads the three views and nothing else (SQLSTATE 42501 elsewhere)', () => {
    asAnalyst((conn) => {
      for (const view of ['tidy_results', 'tidy_rounds', 'tidy_alerts'])
        expect(conn.query(`SELECT count(*) AS n FROM ${view}`).rows[0]!.n, view).toBeGreaterThan(0);
      const refused = (sql: string): string | undefined => {
        try {
          conn.query(sql);
          return undefined;
        } catch (error) {
          return error instanceof PgError ? error.code : String(error);
        }
      };
      expect(refused('SELECT count(*) FROM results')).toBe('42501');
      expect(refused('SELECT count(*) FROM files')).toBe('42501');
      expect(refused("DELETE FROM analysis_rounds WHERE site = 'hollow-creek'")).toBe('42501');
    });
  });
});
