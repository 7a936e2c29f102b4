/**
 * Stopping `ingest` and `watch` with a signal. `ingest` finishes the file in hand (one store
 * transaction, src/store/writer.ts), leaves the rest in the inbox, names them, and exits 128 plus
 * the signal number: 143 for SIGTERM (15), 130 for SIGINT (2). Signal numbers from signal(7);
 * 128 + n is the shell's convention for "ended by signal n" (POSIX Shell Command Language,
 * 2.8.2 "Exit Status for Commands": greater than 128; bash uses 128 + n, from memory).
 * `watch` stops cleanly with exit 0 and says "stopped" once.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { bigNorthfieldExport, lookIntoStore, processWorkspace, spawnCli } from '../helpers/hardening.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const FILES = 12;
const ROWS = 4_000;

let root: string;
beforeAll(() => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-signals-'));
});
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));
const workspace = workspacesPerTest();

describe('ingest stopped by a signal', () => {
  it('SIGTERM after the first receipt: whole files in the store, the rest left in the inbox and named, exit 143', async () => {
    const ws = processWorkspace(root, 'sigterm');
    const names = Array.from({ length: FILES }, (_, i) => `nvdl_${String(i).padStart(2, '0')}.csv`);
    const files = names.map((name, i) => {
      const file = path.join(ws.paths.inbox, name);
      fs.writeFileSync(file, bigNorthfieldExport(ROWS, `SIG${i}`));
      return file;
    });
    const { child, done } = spawnCli(['ingest', ...files, ...ws.flags]);
    let seen = '';
    child.stdout!.on('data', (chunk: Buffer) => {
      seen += chunk.toString();
      if (seen.includes('accepted ') && child.exitCode === null && !child.killed) child.kill('SIGTERM');
    });
    const run = await done;
    expect(run.signal, run.stderr).toBeNull();
    expect(run.code, run.stderr).toBe(143);
    const look = lookIntoStore(ws.paths.db);
    expect(look.integrity).toBe('ok');
    const stored = Object.keys(look.resultsByFile).sort();
    // Whole files only: each stored file holds all its rows.
    for (const name of stored) expect(look.resultsByFile[name], name).toBe(ROWS);
    expect(stored.length).toBeGreaterThanOrEqual(1);
    const left = fs
      .readdirSync(ws.paths.inbox)
      .filter((name) => name.endsWith('.csv'))
      .sort();
    expect(left.length, 'files left for the next run').toBeGreaterThan(0);
    expect([...stored, ...left].sort()).toEqual(names);
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'archive')).sort()).toEqual(stored);
    expect(run.stderr).toMatch(/stopped by SIGTERM/);
    for (const name of left) expect(run.stderr).toContain(name);
    for (const name of stored) expect(run.stderr).not.toContain(name);
  });

  it('SIGINT before the first file: nothing read, every file named as left, exit 130', async () => {
    const ws = workspace();
    const files = ['a.csv', 'b.csv'].map((name) => {
      const file = path.join(ws.paths.inbox, name);
      fs.writeFileSync(file, 'sample_id,site,barn,pen,hung_on\nC1,HOLLOW-CREEK,F1,A1,2026-08-03\n');
      return file;
    });
    const run = await runCli(['ingest', ...files, ...ws.cliFlags], { stopSignal: Promise.resolve('SIGINT') });
    expect(run.code).toBe(130);
    expect(run.stderr).toMatch(/stopped by SIGINT/);
    for (const file of files) {
      expect(run.stderr).toContain(file);
      expect(fs.existsSync(file)).toBe(true);
    }
    expect(lookIntoStore(ws.paths.db).files).toEqual([]);
  });
});

describe('watch stopped by a signal', () => {
  it('says "stopped" once and exits 0', async () => {
    const ws = workspace();
    let stop!: () => void;
    const stopSignal = new Promise<void>((resolve) => (stop = resolve));
    let stdout = '';
    const running = runCli(['watch', ...ws.cliFlags, '--stable-ms', '50'], {
      stopSignal,
      stdout: (text) => {
        stdout += text;
        if (text.includes('quiet period')) stop();
      },
    });
    const run = await running;
    expect(run.code, run.stderr).toBe(0);
    // Each line of a watch begins with its ISO 8601 time (runCli's fixed clock).
    expect(stdout.match(/^2026-12-01T12:00:00\.000Z stopped$/gm)).toEqual(['2026-12-01T12:00:00.000Z stopped']);
  });
});
