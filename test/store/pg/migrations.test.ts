import { spawn } from 'node:child_process';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type Database from 'better-sqlite3';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDatabase } from '../../../src/store/open.js';
import { MATCHES_SQLITE_VERSION, migratePg, PG_MIGRATIONS, pgSchemaVersion } from '../../../src/store/pg/migrations.js';
import { SyncConnection } from '../../../src/store/pg/syncConnection.js';
import { freshDatabase, type TestDatabase, withAdmin } from '../../helpers/pgServer.js';

const here = path.dirname(fileURLToPath(import.meta.url));

let db: TestDatabase;
let conn: SyncConnection;
let lite: Database.Database;

beforeAll(async () => {
  db = await freshDatabase('schema');
  conn = new SyncConnection(db.url);
  migratePg(conn);
  lite = openDatabase(':memory:');
});

afterAll(async () => {
  conn?.close();
  lite?.close();
  await db?.drop();
});

/** SQLite's declared type as the PostgreSQL type the mapping promises (migrations.ts). */
function mappedType(declared: string): string {
  const type = declared.toUpperCase();
  if (type === 'INTEGER') return 'bigint';
  if (type === 'REAL') return 'double precision';
  if (type === 'TEXT') return 'text';
  if (type === 'BLOB') return 'bytea';
  throw new Error(`unexpected SQLite type ${declared}`);
}

interface Relation {
  kind: 'table' | 'view';
  columns: string[];
}

function sqliteRelations(): Map<string, Relation> {
  const rows = lite
    .prepare(
      "SELECT type, name FROM sqlite_master WHERE type IN ('table', 'view') AND name NOT LIKE 'sqlite_%' ORDER BY name",
    )
    .all() as { type: 'table' | 'view'; name: string }[];
  return new Map(
    rows.map((r) => [
      r.name,
      {
        kind: r.type,
        columns: (
          lite.pragma(`table_info(${r.name})`) as { name: string; type: string; notnull: number; pk: number }[]
        ).map((c) =>
          r.type === 'view' ? c.name : `${c.name} ${mappedType(c.type)}${c.notnull || c.pk ? ' not null' : ''}`,
        ),
      },
    ]),
  );
}

function pgRelations(): Map<string, Relation> {
  const rows = conn.query<{ name: string; kind: string; column: string; type: string; notnull: boolean }>(
    `SELECT c.relname AS name, c.relkind AS kind, a.attname AS column, format_type(a.atttypid, a.atttypmod) AS type, a.attnotnull AS notnull
       FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
       JOIN pg_attribute a ON a.attrelid = c.oid AND a.attnum > 0 AND NOT a.attisdropped
      WHERE n.nspname = current_schema() AND c.relkind IN ('r', 'v') AND c.relname <> 'schema_migrations'
      ORDER BY c.relname, a.attnum`,
  ).rows;
  const out = new Map<string, Relation>();
  for (const r of rows) {
    const kind = r.kind === 'v' ? 'view' : 'table';
    const relation = out.get(r.name) ?? { kind, columns: [] };
    relation.columns.push(kind === 'view' ? r.column : `${r.column} ${r.type}${r.notnull ? ' not null' : ''}`);
    out.set(r.name, relation);
  }
  return out;
}

/** Each table's unique column lists (primary key included), sorted, from SQLite's indexes. */
function sqliteUniques(): string[] {
  const out: string[] = [];
  const tables = lite.prepare("SELECT name FROM sqlite_master WHERE type = 'table'").all() as { name: string }[];
  for (const { name } of tables) {
    const pk = (lite.pragma(`table_info(${name})`) as { name: string; pk: number }[])
      .filter((c) => c.pk > 0)
      .sort((a, b) => a.pk - b.pk);
    if (pk.length > 0) out.push(`${name}(${pk.map((c) => c.name).join(',')})`);
    for (const index of lite.pragma(`index_list(${name})`) as {
      name: string;
      unique: number;
      origin: string;
      partial: number;
    }[]) {
      if (!index.unique || index.origin === 'pk') continue;
      const cols = (lite.pragma(`index_info(${index.name})`) as { name: string }[]).map((c) => c.name);
      out.push(`${name}(${cols.join(',')})`);
    }
  }
  return [...new Set(out)].sort();
}

function pgUniques(): string[] {
  return conn
    .query<{ entry: string }>(
      `SELECT t.relname || '(' || string_agg(a.attname, ',' ORDER BY k.ord) || ')' AS entry
         FROM pg_index i JOIN pg_class t ON t.oid = i.indrelid JOIN pg_namespace n ON n.oid = t.relnamespace
         CROSS JOIN LATERAL unnest(i.indkey) WITH ORDINALITY AS k(attnum, ord)
         JOIN pg_attribute a ON a.attrelid = t.oid AND a.attnum = k.attnum
        WHERE i.indisunique AND n.nspname = current_schema() AND t.relname <> 'schema_migrations'
        GROUP BY i.indexrelid, t.relname`,
    )
    .rows.map((r) => r.entry)
    .sort();
}

function sqliteForeignKeys(): string[] {
  const tables = lite.prepare("SELECT name FROM sqlite_master WHERE type = 'table'").all() as { name: string }[];
  return tables
    .flatMap(({ name }) =>
      (lite.pragma(`foreign_key_list(${name})`) as { table: string; from: string; to: string }[]).map(
        (fk) => `${name}.${fk.from} -> ${fk.table}.${fk.to}`,
      ),
    )
    .sort();
}

function pgForeignKeys(): string[] {
  return conn
    .query<{ entry: string }>(
      `SELECT c.conrelid::regclass::text || '.' || a.attname || ' -> ' || c.confrelid::regclass::text || '.' || b.attname AS entry
         FROM pg_constraint c
         JOIN pg_attribute a ON a.attrelid = c.conrelid AND a.attnum = c.conkey[1]
         JOIN pg_attribute b ON b.attrelid = c.confrelid AND b.attnum = c.confkey[1]
        WHERE c.contype = 'f'`,
    )
    .rows.map((r) => r.entry)
    .sort();
}

describe('the PostgreSQL schema against the SQLite store', () => {
  it('is migrated to the version this mirror matches', () => {
    expect(lite.pragma('user_version', { simple: true })).toBe(MATCHES_SQLITE_VERSION);
    expect(pgSchemaVersion(conn)).toBe(PG_MIGRATIONS.length);
  });

  it('has the same tables and views, with the same columns in the same order, types mapped and NOT NULL alike', () => {
    expect(Object.fromEntries(pgRelations())).toEqual(Object.fromEntries(sqliteRelations()));
  });

  it('has the same primary keys and unique column lists', () => {
    expect(pgUniques()).toEqual(sqliteUniques());
  });

  it('has the same references between tables', () => {
    expect(pgForeignKeys()).toEqual(sqliteForeignKeys());
  });

  it('refuses the same rows as the checks and NOT NULLs of the SQLite store do', () => {
    // Each statement broken in one way; both stores must refuse it and take its fixed twin.
    const file =
      "INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (1, 'a.csv', 'h1', 'results', 'd', 'accepted', 1)";
    const reading = (values: string) =>
      `INSERT INTO readings (id, lab_assay, measure, class, call_differs, positive_below, suspect_below, cycle_limit, positive_at_or_above, lab_call_class, status_kind)
         VALUES ${values}`;
    const result = (values: string) =>
      `INSERT INTO results (file_id, line, sample, lab_id, assay_id, ct, ct_raw, reason, content_key, sp, reading) VALUES ${values}`;
    const cases = [
      "INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (2, 'b', 'h2', 'other', 'd', 'accepted', 1)",
      "INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (2, 'b', 'h2', 'ropes', 'd', 'done', 1)",
      "INSERT INTO files (id, name, sha256, kind, received_at, status, byte_length) VALUES (2, 'b', 'h1', 'ropes', 'd', 'accepted', 1)",
      "INSERT INTO ropes (sample, site_id, barn_id, pen_id, hung_on, source, file_id, line) VALUES (1, 's', 'b', 'p', 'd', 'guess', 1, 1)",
      reading("(3, 'a', 'sp-ratio', 'positive', 0, 35, 38, 40, 0.4, NULL, NULL)"),
      reading("(3, 'a', 'sp-ratio', 'positive', 0, 0, 0, 0, NULL, NULL, NULL)"),
      reading("(3, 'a', 'ct', 'positive', 0, 35, 38, 40, 0.4, NULL, NULL)"),
      reading("(3, 'a', 'pcr', 'positive', 0, 35, 38, 40, NULL, NULL, NULL)"),
      reading("(3, 'a', 'ct', 'maybe', 0, 35, 38, 40, NULL, NULL, NULL)"),
      reading("(3, 'a', 'ct', 'positive', 0, 35, 38, 40, NULL, 'maybe', NULL)"),
      reading("(3, 'a', 'ct', 'positive', 0, 35, 38, 40, NULL, NULL, 'draft')"),
      reading("(3, NULL, 'ct', 'positive', 0, 35, 38, 40, NULL, NULL, NULL)"),
      reading("(3, 'a', 'ct', 'positive', NULL, 35, 38, 40, NULL, NULL, NULL)"),
      result("(1, 1, 1, 'l', 'a', 30, '30', 1, 1, 1.2, 1)"),
      result("(1, 1, 99, 'l', 'a', 30, '30', 1, 1, NULL, 1)"),
      result("(1, 1, 1, 'l', 'a', 30, '30', 1, 1, NULL, 99)"),
      result("(1, 1, 1, 'l', 'a', 30, '30', 1, 1, NULL, NULL)"),
      result("(1, 1, 1, 'l', 'a', 30, '30', 99, 1, NULL, 1)"),
    ];
    const setup = [
      file,
      "INSERT INTO samples (id, sample_id) VALUES (1, 'S1')",
      "INSERT INTO reasons (id, text) VALUES (1, 'r')",
      reading("(1, 'a', 'ct', 'positive', 0, 35, 38, 40, NULL, 'positive', 'final')"),
      reading("(2, 'a', 'sp-ratio', 'positive', 0, 0, 0, 0, 0.4, NULL, NULL)"),
    ];
    lite.exec('BEGIN');
    conn.query('BEGIN');
    try {
      for (const sql of setup) {
        lite.exec(sql);
        conn.query(sql);
      }
      for (const sql of cases) {
        lite.exec('SAVEPOINT c');
        conn.query('SAVEPOINT c');
        expect(() => lite.exec(sql), sql).toThrow();
        expect(() => conn.query(sql), sql).toThrow();
        lite.exec('ROLLBACK TO c');
        conn.query('ROLLBACK TO c');
      }
      for (const good of [
        result("(1, 1, 1, 'l', 'a', 30, '30', 1, 1, NULL, 1)"),
        result("(1, 2, 1, 'l', 'a-ab', NULL, '1.2', 1, 2, 1.2, 2)"),
      ]) {
        lite.exec(good);
        conn.query(good);
        conn.query('SAVEPOINT c');
        expect(() => lite.exec(good)).toThrow(/UNIQUE/);
        expect(() => conn.query(good)).toThrow(expect.objectContaining({ code: '23505' }));
        conn.query('ROLLBACK TO c');
      }
    } finally {
      lite.exec('ROLLBACK');
      conn.query('ROLLBACK');
    }
  });

  it('does nothing when migrated again', () => {
    expect(migratePg(conn)).toEqual([]);
  });
});

function runChild(url: string, barrier: number): Promise<{ code: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve) => {
    const child = spawn(
      process.execPath,
      ['--import', 'tsx', path.join(here, 'migrateChild.ts'), url, String(barrier)],
      {
        stdio: ['ignore', 'pipe', 'pipe'],
      },
    );
    let stdout = '';
    let stderr = '';
    child.stdout.on('data', (d) => (stdout += d));
    child.stderr.on('data', (d) => (stderr += d));
    child.on('close', (code) => resolve({ code, stdout, stderr }));
  });
}

describe('two processes migrating one database at once', () => {
  it('migrates once: one applies every migration, the other waits and applies none', async () => {
    const target = await freshDatabase('race');
    const barrier = 4242;
    try {
      await withAdmin(target.url, async (holder) => {
        // Both children wait at the barrier; let them go together once both are there.
        await holder.query('SELECT pg_advisory_lock($1)', [barrier]);
        const children = [runChild(target.url, barrier), runChild(target.url, barrier)];
        for (let waited = 0; ; waited += 50) {
          const { rows } = await holder.query(
            "SELECT count(*)::int AS n FROM pg_locks WHERE locktype = 'advisory' AND NOT granted AND objid = $1",
            [barrier],
          );
          if (rows[0].n === 2) break;
          if (waited > 60_000) throw new Error('the two processes never reached the barrier');
          await new Promise((r) => setTimeout(r, 50));
        }
        await holder.query('SELECT pg_advisory_unlock($1)', [barrier]);
        const results = await Promise.all(children);
        for (const r of results) expect(r.code, r.stderr).toBe(0);
        const applied = results.map((r) => JSON.parse(r.stdout) as number[]).sort((a, b) => b.length - a.length);
        expect(applied).toEqual([PG_MIGRATIONS.map((_, i) => i + 1), []]);
        const { rows } = await holder.query('SELECT version FROM schema_migrations ORDER BY version');
        expect(rows.map((r) => Number(r.version))).toEqual(PG_MIGRATIONS.map((_, i) => i + 1));
      });
    } finally {
      await target.drop();
    }
  });
});
