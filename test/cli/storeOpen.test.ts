/**
 * A --db that is not a usable store, through the CLI in-process (main): a file of other bytes,
 * a folder, a real store cut short (as a copy interrupted or a full disk leaves it), a SQLite
 * database of another program, and a mistyped path given to a command that only reads. Each is
 * a usage error (exit 2, src/cli/io.ts EXIT) whose message names the file, with no stack trace,
 * and the file is left as it was. SQLite's own behaviour is the reference: a file shorter than
 * the page count in its header is SQLITE_CORRUPT, other bytes are SQLITE_NOTADB
 * (sqlite.org/fileformat2.html, "The Database Header"; sqlite.org/rescode.html).
 */
import Database from 'better-sqlite3';
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { Store, StoreOpenError } from '../../src/store/store.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

/** CLI flags with another --db. */
const withDb = (ws: TestWorkspace, db: string) => [
  '--config',
  ws.paths.configDir,
  '--db',
  db,
  '--inbox',
  ws.paths.inbox,
  '--outbox',
  ws.paths.outbox,
];

/** A store holding one rope sheet and one lab export, closed (so its WAL is checkpointed into the file). */
async function realStore(ws: TestWorkspace): Promise<Buffer> {
  const site = ws.config().siteById.get('HOLLOW-CREEK')!;
  await ws.drop('ropes.csv', ropeSheet(site, [{ sampleId: 'C1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' }]));
  await ws.drop(
    'nvdl_r.csv',
    northfieldExport([{ sampleId: 'C1', assay: 'PRRSV', ct: 30, collectedOn: '2026-08-03' }], '2026-08-06', 1),
  );
  ws.closeStore();
  expect(fs.existsSync(`${ws.paths.dbFile}-wal`)).toBe(false);
  return fs.readFileSync(ws.paths.dbFile);
}

/** The page count SQLite's header records (bytes 28-31, big-endian) times the page size (bytes 16-17). */
function headerBytes(bytes: Buffer): number {
  return bytes.readUInt32BE(28) * bytes.readUInt16BE(16);
}

function expectUsageNaming(run: { code: number; stderr: string; stdout: string }, file: string, words: RegExp): void {
  expect(run.code, run.stderr).toBe(2);
  expect(run.stderr).toContain(file);
  expect(run.stderr).toMatch(words);
  // No stack trace reaches the user.
  expect(run.stderr).not.toMatch(/\n\s+at /);
  expect(run.stderr).not.toContain('SqliteError');
}

describe('--db that is not a store', () => {
  it('a file of other bytes: exit 2 naming the file, for status and for ingest, and the file is untouched', async () => {
    const ws = workspace();
    const garbage = path.join(ws.root, 'notes.db');
    const bytes = Buffer.from('these are field notes, not a database\n'.repeat(40));
    fs.writeFileSync(garbage, bytes);
    expectUsageNaming(await runCli(['status', ...withDb(ws, garbage)]), garbage, /not a SQLite database/);
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    const sheet = path.join(ws.paths.inbox, 'ropes.csv');
    fs.writeFileSync(sheet, ropeSheet(site, [{ sampleId: 'C1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' }]));
    expectUsageNaming(await runCli(['ingest', sheet, ...withDb(ws, garbage)]), garbage, /not a SQLite database/);
    expect(fs.readFileSync(garbage).equals(bytes)).toBe(true);
    // The input stays in the inbox for a run against the right store.
    expect(fs.existsSync(sheet)).toBe(true);
  });

  it('a folder: exit 2 saying so', async () => {
    const ws = workspace();
    const folder = path.join(ws.root, 'data-folder');
    fs.mkdirSync(folder);
    expectUsageNaming(await runCli(['status', ...withDb(ws, folder)]), folder, /is a folder/);
    expectUsageNaming(await runCli(['report', ...withDb(ws, folder)]), folder, /is a folder/);
  });

  it('a real store cut to 3000 bytes and to half its length: exit 2 saying it is damaged, bytes untouched', async () => {
    const ws = workspace();
    const whole = await realStore(ws);
    // The header claims more pages than the cut file holds: what SQLite checks when it first reads.
    expect(headerBytes(whole)).toBeLessThanOrEqual(whole.length);
    for (const length of [3000, Math.floor(whole.length / 2)]) {
      const cut = path.join(ws.root, `cut-${length}.db`);
      fs.writeFileSync(cut, whole.subarray(0, length));
      expect(headerBytes(whole)).toBeGreaterThan(length);
      expectUsageNaming(await runCli(['status', ...withDb(ws, cut)]), cut, /damaged/);
      expectUsageNaming(await runCli(['report', ...withDb(ws, cut)]), cut, /damaged/);
      expect(fs.readFileSync(cut).equals(whole.subarray(0, length))).toBe(true);
    }
    // The whole copy still opens: the probe refuses damage, not stores.
    const copy = path.join(ws.root, 'copy.db');
    fs.writeFileSync(copy, whole);
    const run = await runCli(['status', '--json', ...withDb(ws, copy)]);
    expect(run.code, run.stderr).toBe(0);
    expect(JSON.parse(run.stdout)).toMatchObject({ files: 2, results: 1, ropes: 1 });
  });

  it("a SQLite database of another program: refused, none of the store's tables added to it", async () => {
    const ws = workspace();
    const other = path.join(ws.root, 'inventory.sqlite');
    const db = new Database(other);
    db.exec('CREATE TABLE feed (bin TEXT, tonnes REAL)');
    db.close();
    expectUsageNaming(await runCli(['report', ...withDb(ws, other)]), other, /another program/);
    const check = new Database(other, { readonly: true });
    expect(check.prepare("SELECT name FROM sqlite_schema WHERE type = 'table'").pluck().all()).toEqual(['feed']);
    check.close();
  });

  it('the Store itself throws StoreOpenError naming the file, and opens a new file or an empty one', () => {
    const ws = workspace();
    const garbage = path.join(ws.root, 'x.db');
    fs.writeFileSync(garbage, 'x'.repeat(2048));
    expect(() => new Store(garbage)).toThrow(StoreOpenError);
    expect(() => new Store(garbage)).toThrow(garbage);
    expect(() => new Store(path.join(ws.root, 'absent.db'), { create: false })).toThrow(/does not exist/);
    expect(fs.existsSync(path.join(ws.root, 'absent.db'))).toBe(false);
    // An empty file is an empty SQLite database (sqlite.org/fileformat2.html): it becomes a store.
    const empty = path.join(ws.root, 'empty.db');
    fs.writeFileSync(empty, '');
    const store = new Store(empty);
    expect(store.counts().files).toBe(0);
    store.close();
  });
});

describe('status only reads', () => {
  it('a mistyped --db: exit 2 saying the store does not exist, and no store or folder is created', async () => {
    const ws = workspace();
    const typo = path.join(ws.root, 'dta', 'ropewatch.db');
    const run = await runCli(['status', ...withDb(ws, typo)]);
    expectUsageNaming(run, typo, /does not exist/);
    expect(fs.existsSync(typo)).toBe(false);
    expect(fs.existsSync(path.dirname(typo))).toBe(false);
    // A command that writes may create it.
    const report = await runCli(['report', ...withDb(ws, typo)]);
    expect(report.code, report.stderr).toBe(0);
    expect(fs.existsSync(typo)).toBe(true);
    expect((await runCli(['status', ...withDb(ws, typo)])).code).toBe(0);
  });
});
