/**
 * The demo on a PostgreSQL store gives the outbox the demo gives on a SQLite store, byte for byte
 * (the SQLite store is the reference implementation); receipts alike but for the times they
 * carry. The location comes from ROPEWATCH_DB, its password never shown; a database holding files
 * the demo did not make is refused unless --force, which empties it.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { OUTBOX_DELIVERY_STATE } from '../../src/alerts/deliveryState.js';
import { SyncConnection } from '../../src/store/pg/syncConnection.js';
import { freshDatabase, type TestDatabase } from '../helpers/pgServer.js';
import { runCli } from '../helpers/runCli.js';
import { treeHashes } from '../helpers/workspace.js';

const PASSWORD = 'test-only-password';

let root: string;
let pg: TestDatabase;
const sqliteDir = () => path.join(root, 'sqlite');
const pgDir = () => path.join(root, 'pg');

/** Receipts carry the time they were written: their files are compared with the times masked. */
const TIMES = /\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(?:\.\d+)?Z/g;

function receipts(dir: string): Record<string, string> {
  const folder = path.join(dir, 'outbox', 'receipts');
  return Object.fromEntries(
    fs
      .readdirSync(folder)
      .sort()
      .map((name) => [name, fs.readFileSync(path.join(folder, name), 'utf8').replace(TIMES, '<time>')]),
  );
}

beforeAll(async () => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-demo-pg-'));
  fs.mkdirSync(sqliteDir());
  fs.mkdirSync(pgDir());
  pg = await freshDatabase('demo');
  const onSqlite = await runCli(['demo'], { cwd: sqliteDir() });
  expect(onSqlite.code, onSqlite.stderr).toBe(0);
  const onPg = await runCli(['demo'], { cwd: pgDir(), env: { ROPEWATCH_DB: pg.url } });
  expect(onPg.code, onPg.stderr).toBe(0);
  expect(onPg.stdout.replaceAll(pgDir(), '<dir>')).toBe(onSqlite.stdout.replaceAll(sqliteDir(), '<dir>'));
}, 600_000);

afterAll(async () => {
  await pg?.drop();
  if (root !== undefined) fs.rmSync(root, { recursive: true, force: true });
});

describe('the demo on a PostgreSQL store', () => {
  it('writes the same summaries, cluster reviews, rope lists and every other output file as on SQLite', () => {
    const want = treeHashes(path.join(sqliteDir(), 'outbox'), ['receipts']);
    const got = treeHashes(path.join(pgDir(), 'outbox'), ['receipts']);
    // The alert delivery state: beside the SQLite file, in the outbox for PostgreSQL.
    expect(Object.keys(got)).toContain(OUTBOX_DELIVERY_STATE);
    delete got[OUTBOX_DELIVERY_STATE];
    const kinds = Object.keys(want);
    for (const name of ['summary.csv', 'clusters.csv', 'next-round.csv'])
      expect(
        kinds.some((file) => file.endsWith(name)),
        name,
      ).toBe(true);
    expect(got).toEqual(want);
    expect(receipts(pgDir())).toEqual(receipts(sqliteDir()));
    // Nothing of the store beside the outbox: no SQLite file was made.
    expect(fs.existsSync(path.join(pgDir(), 'data'))).toBe(false);
  });

  it('shows the store without its password in status, and reads the same counts as SQLite', async () => {
    expect(pg.url).toContain(PASSWORD);
    const [onPg, onSqlite] = await Promise.all([
      runCli(['status', '--json'], { cwd: pgDir(), env: { ROPEWATCH_DB: pg.url } }),
      runCli(['status', '--json'], { cwd: sqliteDir() }),
    ]);
    expect(onPg.code, onPg.stderr).toBe(0);
    expect(`${onPg.stdout}${onPg.stderr}`).not.toContain(PASSWORD);
    const { store: shown, ...pgStatus } = JSON.parse(onPg.stdout) as { store: string };
    const { store: _file, ...sqliteStatus } = JSON.parse(onSqlite.stdout) as { store: string };
    expect(shown).toBe(pg.url.replace(PASSWORD, '***'));
    expect(pgStatus).toEqual(sqliteStatus);
    const text = await runCli(['status', '--db', pg.url], { cwd: pgDir() });
    expect(text.code, text.stderr).toBe(0);
    expect(text.stdout.split('\n')[0]).toBe(`store ${pg.url.replace(PASSWORD, '***')}`);
  });

  it('exports the same tidy tables as from SQLite', async () => {
    const args = ['export', '--site', 'hollow-creek', '--format', 'json'];
    const [onPg, onSqlite] = await Promise.all([
      runCli(args, { cwd: pgDir(), env: { ROPEWATCH_DB: pg.url } }),
      runCli(args, { cwd: sqliteDir() }),
    ]);
    expect(onPg.code, onPg.stderr).toBe(0);
    expect(onPg.stdout.length).toBeGreaterThan(10_000);
    expect(onPg.stdout.replaceAll(pgDir(), '<dir>')).toBe(onSqlite.stdout.replaceAll(sqliteDir(), '<dir>'));
  });

  it('refuses a database holding files the demo did not make, and empties it with --force', async () => {
    const conn = new SyncConnection(pg.url);
    try {
      conn.query("DELETE FROM meta WHERE key = 'demo-store'");
    } finally {
      conn.close();
    }
    const refused = await runCli(['demo'], { cwd: pgDir(), env: { ROPEWATCH_DB: pg.url } });
    expect(refused.code).toBe(2);
    expect(refused.stderr).toMatch(/holds \d+ files that the demo did not make/);
    expect(refused.stderr).not.toContain(PASSWORD);
    const forced = await runCli(['demo', '--force'], { cwd: pgDir(), env: { ROPEWATCH_DB: pg.url } });
    expect(forced.code, forced.stderr).toBe(0);
    expect(treeHashes(path.join(pgDir(), 'outbox'), ['receipts', OUTBOX_DELIVERY_STATE])).toEqual(
      treeHashes(path.join(sqliteDir(), 'outbox'), ['receipts']),
    );
  }, 600_000);
});
