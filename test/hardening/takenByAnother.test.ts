/**
 * Two `ingest` runs on one file, with the other process played by the test: the file leaves the
 * inbox (archived by the other run) at each step of this run where the race can fall, i.e. just
 * before it is hashed, just before its first 64 KB are read, and just before it is moved. The
 * hooks wrap node:fs (the same module object src/ingest and src/inboxFiles.ts call), move the file
 * as the other process would, then let the real call run. Expected: this run says the file was
 * already taken by another process, exits 0 and writes no receipt claiming the file was refused.
 * The two-process race itself is in concurrency.test.ts.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterEach, describe, expect, it, vi } from 'vitest';
import type { Receipt } from '../../src/ingest/ingestFile.js';
import { lookIntoStore } from '../helpers/hardening.js';
import { runCli } from '../helpers/runCli.js';
import { workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
afterEach(() => vi.restoreAllMocks());

const ROPES = 'sample_id,site,barn,pen,hung_on\nC1,HOLLOW-CREEK,F1,A1,2026-08-03\n';

/** Moves `file` into the inbox archive, as the other process does after its commit. */
function archiveAsOther(ws: TestWorkspace, file: string): void {
  const archive = path.join(ws.paths.inbox, 'archive');
  fs.mkdirSync(archive, { recursive: true });
  fs.renameSync(file, path.join(archive, path.basename(file)));
}

/** Receipts written under outbox/receipts/. */
function receipts(ws: TestWorkspace): Receipt[] {
  const dir = path.join(ws.paths.outbox, 'receipts');
  if (!fs.existsSync(dir)) return [];
  return fs
    .readdirSync(dir)
    .filter((name) => name.endsWith('.json'))
    .map((name) => JSON.parse(fs.readFileSync(path.join(dir, name), 'utf8')) as Receipt);
}

describe('a file taken by another process part-way', () => {
  it.each([
    ['before it is hashed', 'createReadStream'],
    ['before its head is read', 'openSync'],
  ] as const)('%s: "already taken by another process", exit 0, nothing stored, no receipt', async (_when, call) => {
    const ws = workspace();
    const file = path.join(ws.paths.inbox, 'ropes.csv');
    fs.writeFileSync(file, ROPES);
    const real = fs[call] as (...args: unknown[]) => unknown;
    let otherMoved = false;
    vi.spyOn(fs, call).mockImplementation(((...args: unknown[]) => {
      if (args[0] === file && !otherMoved) {
        otherMoved = true;
        archiveAsOther(ws, file);
      }
      return real.apply(fs, args);
    }) as never);
    const run = await runCli(['ingest', file, ...ws.cliFlags]);
    vi.restoreAllMocks();
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout + run.stderr).toContain('ropes.csv: already taken by another process');
    expect(run.stdout + run.stderr).not.toMatch(/file-read-error|rejected/);
    expect(receipts(ws)).toEqual([]);
    expect(lookIntoStore(ws.paths.db).files).toEqual([]);
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'archive'))).toEqual(['ropes.csv']);
  });

  it('before it is moved (both stored it, the other moved it first): no crash, exit 0, the true receipt kept', async () => {
    const ws = workspace();
    const file = path.join(ws.paths.inbox, 'ropes.csv');
    fs.writeFileSync(file, ROPES);
    const real = fs.renameSync;
    let otherMoved = false;
    vi.spyOn(fs, 'renameSync').mockImplementation((from, to) => {
      if (from === file && !otherMoved) {
        otherMoved = true;
        archiveAsOther(ws, file);
      }
      return real(from, to);
    });
    const run = await runCli(['ingest', file, ...ws.cliFlags]);
    vi.restoreAllMocks();
    expect(run.code, run.stderr).toBe(0);
    expect(run.stdout).toContain('accepted ropes.csv');
    expect(receipts(ws).map((receipt) => receipt.status)).toEqual(['accepted']);
    expect(lookIntoStore(ws.paths.db).files).toEqual([
      expect.objectContaining({ name: 'ropes.csv', status: 'accepted' }),
    ]);
    expect(fs.readdirSync(path.join(ws.paths.inbox, 'archive'))).toEqual(['ropes.csv']);
  });
});
