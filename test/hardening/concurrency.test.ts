/**
 * Two `ropewatch ingest` processes on one store at the same time. How the store serialises them
 * (src/store/writer.ts): every file is one transaction opened with BEGIN IMMEDIATE, which takes
 * SQLite's single write lock up front; a second writer waits on that lock for up to the busy
 * timeout (120 s) and then runs its own file whole. Rows of two files never interleave inside a
 * transaction, and WAL readers see only committed files (SQLite documentation, "Write-Ahead
 * Logging" and "BEGIN TRANSACTION": IMMEDIATE starts a write transaction at once).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bigNorthfieldExport, lookIntoStore, processWorkspace, spawnCli } from '../helpers/hardening.js';

const ROWS = 20_000;
let root: string;
beforeAll(() => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-concurrent-'));
});
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));

const workspace = (name: string) => processWorkspace(root, name);

describe('two ingest processes on the same store', () => {
  it('store two different files once each, whole, with an intact database (the write lock serialises them)', async () => {
    const ws = workspace('different');
    const a = path.join(ws.paths.inbox, 'nvdl_a.csv');
    const b = path.join(ws.paths.inbox, 'nvdl_b.csv');
    fs.writeFileSync(a, bigNorthfieldExport(ROWS, 'LABA'));
    fs.writeFileSync(b, bigNorthfieldExport(ROWS, 'LABB'));
    const [first, second] = await Promise.all([
      spawnCli(['ingest', a, ...ws.flags]).done,
      spawnCli(['ingest', b, ...ws.flags]).done,
    ]);
    expect(first.code, first.stderr).toBe(0);
    expect(second.code, second.stderr).toBe(0);
    const look = lookIntoStore(ws.paths.db);
    expect(look.integrity).toBe('ok');
    expect(look.resultsByFile).toEqual({ 'nvdl_a.csv': ROWS, 'nvdl_b.csv': ROWS });
    expect(look.files.map((file) => file.name).sort()).toEqual(['nvdl_a.csv', 'nvdl_b.csv']);
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'archive')).sort()).toEqual(['nvdl_a.csv', 'nvdl_b.csv']);
  });

  it('store the same file once when two processes ingest it at once: the second reports it as already stored', async () => {
    const ws = workspace('same');
    const file = path.join(ws.paths.inbox, 'nvdl_same.csv');
    fs.writeFileSync(file, bigNorthfieldExport(ROWS, 'LABS'));
    const runs = await Promise.all([
      spawnCli(['ingest', file, ...ws.flags]).done,
      spawnCli(['ingest', file, ...ws.flags]).done,
    ]);
    for (const run of runs) expect(run.code, run.stderr).toBe(0);
    const outputs = runs.map((run) => run.stdout).join('\n');
    expect(outputs).toContain(`accepted nvdl_same.csv`);
    expect(outputs).toContain(`skipped  nvdl_same.csv`);
    const look = lookIntoStore(ws.paths.db);
    expect(look.integrity).toBe('ok');
    expect(look.resultsByFile).toEqual({ 'nvdl_same.csv': ROWS });
    expect(look.files).toHaveLength(1);
    expect(fs.existsSync(file)).toBe(false);
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'archive'))).toEqual(['nvdl_same.csv']);
  });
});
