import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inject } from 'vitest';
import { copyField, copyLine } from '../../../src/store/pg/copyText.js';
import { PgError, SyncConnection } from '../../../src/store/pg/syncConnection.js';
import { freshDatabase, type TestDatabase } from '../../helpers/pgServer.js';

let db: TestDatabase;
let conn: SyncConnection;

beforeAll(async () => {
  db = await freshDatabase('sync');
  conn = new SyncConnection(db.url);
});

afterAll(async () => {
  conn?.close();
  await db?.drop();
});

describe('COPY text format, field by field', () => {
  // PostgreSQL 17 documentation, COPY, "Text Format": backslash, newline, carriage return and
  // tab are escaped; \N is NULL; bytea's hex output form is \x followed by hex digits
  // ("Binary Data Types", "bytea Hex Format"), whose backslash is doubled for COPY.
  it('escapes the four special characters, spells NULL as \\N and bytes in hex', () => {
    expect(copyField('a\tb\nc\rd\\e')).toBe('a\\tb\\nc\\rd\\\\e');
    expect(copyField(null)).toBe('\\N');
    expect(copyField('')).toBe('');
    expect(copyField('\\N')).toBe('\\\\N');
    expect(copyField(Buffer.from([0, 0xff, 0x5c]))).toBe('\\\\x00ff5c');
    expect(copyField(true)).toBe('t');
    expect(copyLine(['x', null, 2])).toBe('x\t\\N\t2\n');
  });
});

describe('a synchronous PostgreSQL connection', () => {
  it('returns rows and counts synchronously, with parameters', () => {
    const { rows } = conn.query<{ n: number; t: string }>('SELECT $1::int + 1 AS n, $2::text AS t', [41, 'x']);
    expect(rows).toEqual([{ n: 42, t: 'x' }]);
    conn.query('CREATE TABLE counted (id bigint PRIMARY KEY, note text)');
    expect(conn.query('INSERT INTO counted VALUES (1, $1), (2, $2)', ['a', null]).rowCount).toBe(2);
    // bigint comes back as a number, as the SQLite store gives integers.
    expect(conn.query('SELECT id FROM counted ORDER BY id').rows).toEqual([{ id: 1 }, { id: 2 }]);
  });

  it("re-throws the server's error with its SQLSTATE code, message and detail", () => {
    conn.query('CREATE TABLE keyed (k text PRIMARY KEY)');
    conn.query("INSERT INTO keyed VALUES ('a')");
    let caught: unknown;
    try {
      conn.query("INSERT INTO keyed VALUES ('a')");
    } catch (error) {
      caught = error;
    }
    // 23505 unique_violation: PostgreSQL 17 documentation, Appendix A "PostgreSQL Error Codes".
    expect(caught).toBeInstanceOf(PgError);
    expect((caught as PgError).code).toBe('23505');
    expect((caught as PgError).constraint).toBe('keyed_pkey');
    expect((caught as PgError).detail).toBe('Key (k)=(a) already exists.');
    // 42P01 undefined_table, same appendix; the connection is still usable after an error.
    expect(() => conn.query('SELECT * FROM no_such_table')).toThrow(expect.objectContaining({ code: '42P01' }));
    expect(conn.query('SELECT 1 AS one').rows).toEqual([{ one: 1 }]);
  });

  it('commits a transaction, and rolls one back when its body throws', () => {
    conn.query('CREATE TABLE tx (n int)');
    conn.transaction(() => conn.query('INSERT INTO tx VALUES (1)'));
    expect(() =>
      conn.transaction(() => {
        conn.query('INSERT INTO tx VALUES (2)');
        throw new Error('body failed');
      }),
    ).toThrow('body failed');
    expect(() => conn.transaction(() => conn.query('INSERT INTO tx VALUES (NULL::int / 0)'))).not.toThrow();
    expect(() => conn.transaction(() => conn.query('INSERT INTO tx VALUES (1 / 0)'))).toThrow(
      expect.objectContaining({ code: '22012' }),
    );
    expect(conn.query('SELECT n FROM tx ORDER BY n NULLS FIRST').rows).toEqual([{ n: null }, { n: 1 }]);
  });

  it('loads awkward text, NULL against the empty text, and bytes through COPY and reads them back unchanged', () => {
    conn.query('CREATE TABLE awkward (id int PRIMARY KEY, t text, b bytea, r double precision)');
    const bytes = Buffer.from([0, 1, 9, 10, 13, 0x5c, 0x4e, 0xff]);
    const rows = [
      [1, 'tab\there', null, 0.1],
      [2, 'new\nline and cr\r', bytes, -1e-300],
      [3, 'back\\slash \\N \\. end', Buffer.alloc(0), 1.7976931348623157e308],
      [4, '', null, null],
      [5, null, Buffer.from('\\x41'), Number.POSITIVE_INFINITY],
      [6, 'ünïcødé 🐖 ,"quoted";', null, -0.5],
      [7, '\\.', null, 5e-324],
    ] as const;
    expect(conn.transaction(() => conn.copyIn('awkward', ['id', 't', 'b', 'r'], rows))).toBe(rows.length);
    const back = conn.query<{ id: number; t: string | null; b: Buffer | null; r: number | null }>(
      'SELECT id, t, b, r FROM awkward ORDER BY id',
    ).rows;
    expect(back.map((r) => [r.id, r.t, r.b, r.r])).toEqual(rows.map((r) => [...r]));
    expect(Buffer.isBuffer(back[1]?.b)).toBe(true);
    // The server tells NULL from the empty text (its own view, not ours).
    expect(conn.query('SELECT id FROM awkward WHERE t IS NULL').rows).toEqual([{ id: 5 }]);
    expect(conn.query("SELECT id FROM awkward WHERE t = ''").rows).toEqual([{ id: 4 }]);
    expect(conn.query('SELECT octet_length(b) AS n FROM awkward WHERE id = 2').rows).toEqual([{ n: 8 }]);
  });

  it('copies more rows than one chunk holds', () => {
    conn.query('CREATE TABLE many (id int PRIMARY KEY, t text)');
    const text = 'x'.repeat(1000);
    const rows = Array.from({ length: 2000 }, (_, i) => [i, `${i}\t${text}`] as const);
    expect(conn.copyIn('many', ['id', 't'], rows)).toBe(2000);
    expect(conn.query('SELECT count(*)::int AS n, sum(length(t))::int AS chars FROM many').rows).toEqual([
      { n: 2000, chars: rows.reduce((sum, [, t]) => sum + t.length, 0) },
    ]);
  });

  it('fails a COPY the server refuses, rolls it back, and stays usable', () => {
    conn.query('CREATE TABLE strict (id int PRIMARY KEY)');
    expect(() => conn.transaction(() => conn.copyIn('strict', ['id'], [[1], [1]]))).toThrow(
      expect.objectContaining({ code: '23505' }),
    );
    expect(() => conn.copyIn('strict', ['id'], [[1], [2, 3]])).toThrow(RangeError);
    expect(conn.query('SELECT count(*)::int AS n FROM strict').rows).toEqual([{ n: 0 }]);
  });

  it('refuses every call once closed', () => {
    const other = new SyncConnection(db.url);
    other.close();
    other.close();
    expect(() => other.query('SELECT 1')).toThrow(expect.objectContaining({ code: 'connection' }));
  });

  it('reports a refused login as an error with the server code', () => {
    const url = new URL(inject('pgUrl'));
    url.username = 'nobody_here';
    expect(() => new SyncConnection(url.toString())).toThrow(PgError);
  });

  it('takes the password from PGPASSWORD or a password file when the URL leaves it out', () => {
    // node-postgres reads PGPASSWORD and, failing that, the password file (pgpass); libpq's
    // format: host:port:database:user:password (PostgreSQL 17 documentation, "The Password File").
    const url = new URL(db.url);
    const password = decodeURIComponent(url.password);
    url.password = '';
    const env = { ...(process.env as Record<string, string>) };
    delete env.PGPASSWORD;
    const viaEnv = new SyncConnection(url.toString(), { env: { ...env, PGPASSWORD: password } });
    expect(viaEnv.query('SELECT current_user AS u').rows).toEqual([{ u: decodeURIComponent(url.username) }]);
    viaEnv.close();
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-pgpass-'));
    const file = path.join(dir, 'pgpass');
    fs.writeFileSync(file, `*:*:*:${decodeURIComponent(url.username)}:${password}\n`, { mode: 0o600 });
    try {
      const viaFile = new SyncConnection(url.toString(), { env: { ...env, PGPASSFILE: file } });
      expect(viaFile.query('SELECT 1 AS one').rows).toEqual([{ one: 1 }]);
      viaFile.close();
      if (inject('pgEmbedded')) {
        // The embedded server asks for a password: without one the login fails (28P01 or a
        // client-side refusal), so the two above did use what they were given.
        expect(() => new SyncConnection(url.toString(), { env: { ...env, PGPASSWORD: 'wrong' } })).toThrow(PgError);
      }
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});
