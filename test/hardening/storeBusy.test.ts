import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, describe, expect, it } from 'vitest';
import { ingestFiles } from '../../src/cli/runFiles.js';
import { openWorkspace } from '../../src/workspace.js';
import { NORTHFIELD_HEADER, northfieldLine } from '../helpers/hardening.js';
import { runCli } from '../helpers/runCli.js';
import { FIXED_NOW, makeWorkspace, type TestWorkspace } from '../helpers/workspace.js';

let made: TestWorkspace | undefined;
afterEach(() => made?.cleanup());

const BUSY_EXPORT = `${NORTHFIELD_HEADER.join(',')}\n${northfieldLine('C1', 'HCF01-005', 'PRRSV', '30.1')}\n`;

/**
 * A workspace whose store exists and whose write lock another connection holds (another
 * process's long transaction, as SQLite sees it: BEGIN IMMEDIATE takes the RESERVED lock; SQLite,
 * "File Locking And Concurrency In SQLite Version 3").
 */
function workspaceWithLockHeld(): { made: TestWorkspace; holder: Database.Database } {
  const workspace = makeWorkspace();
  openWorkspace(
    workspace.paths,
    () => FIXED_NOW,
    () => {},
  ).close();
  const holder = new Database(workspace.paths.dbFile);
  holder.exec('BEGIN IMMEDIATE');
  return { made: workspace, holder };
}

describe('a writer that cannot get the write lock in time', () => {
  it('says so in one line, stores nothing and leaves the file in the inbox', async () => {
    const setup = workspaceWithLockHeld();
    made = setup.made;
    const { holder } = setup;
    const { paths } = made;
    const file = path.join(paths.inbox, 'nvdl_busy.csv');
    fs.writeFileSync(file, BUSY_EXPORT);
    const ws = openWorkspace(
      paths,
      () => FIXED_NOW,
      () => {},
      { busyTimeoutMs: 150 },
    );
    const out: string[] = [];
    const err: string[] = [];
    try {
      const run = await ingestFiles(
        ws,
        [file],
        { stdout: (t) => out.push(t), stderr: (t) => err.push(t), cwd: made.root, now: () => FIXED_NOW, env: {} },
        false,
      );
      expect(run.failed).toBe(true);
      expect(run.receipts).toEqual([]);
    } finally {
      ws.close();
      holder.exec('ROLLBACK');
      holder.close();
    }
    const lines = err.join('').trimEnd().split('\n');
    expect(lines).toHaveLength(1);
    expect(lines[0]).toMatch(/^ropewatch: store busy: nvdl_busy\.csv/);
    expect(lines[0]).not.toMatch(/\bat \S+:\d+/);
    expect(fs.existsSync(file)).toBe(true);
    const check = new Database(paths.dbFile, { readonly: true });
    try {
      expect(check.prepare('SELECT COUNT(*) AS n FROM files').get()).toEqual({ n: 0 });
    } finally {
      check.close();
    }
  });

  it('in watch, says so and gives the file its turn again until the lock is free', async () => {
    const setup = workspaceWithLockHeld();
    made = setup.made;
    const { holder } = setup;
    const { paths } = made;
    let stop!: () => void;
    const stopSignal = new Promise<void>((resolve) => (stop = resolve));
    let stdout = '';
    let stderr = '';
    const running = runCli(['watch', '--stable-ms', '50', ...made.cliFlags], {
      stopSignal,
      env: { ROPEWATCH_BUSY_TIMEOUT_MS: '100' },
      stdout: (text) => (stdout += text),
      stderr: (text) => (stderr += text),
    });
    const waitFor = async (condition: () => boolean, label: string) => {
      const deadline = Date.now() + 15_000;
      while (!condition()) {
        if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}\n${stdout}\n${stderr}`);
        await new Promise((resolve) => setTimeout(resolve, 20));
      }
    };
    const archived = path.join(paths.inbox, 'archive', 'nvdl_busy.csv');
    try {
      await waitFor(() => stdout.includes('watching'), 'the watcher started');
      fs.writeFileSync(path.join(paths.inbox, 'nvdl_busy.csv'), BUSY_EXPORT);
      await waitFor(() => stderr.includes('store busy: nvdl_busy.csv'), 'the busy store reported');
      expect(fs.existsSync(archived)).toBe(false);
      holder.exec('ROLLBACK');
      await waitFor(() => fs.existsSync(archived), 'the file stored once the lock was free');
      expect(stderr).not.toMatch(/\bat \S+:\d+/);
    } finally {
      if (holder.inTransaction) holder.exec('ROLLBACK');
      holder.close();
      stop();
    }
    expect((await running).code).toBe(0);
  });

  it('refuses a busy timeout that is not a whole number of milliseconds', async () => {
    made = makeWorkspace();
    const run = await runCli(['status', ...made.cliFlags], { env: { ROPEWATCH_BUSY_TIMEOUT_MS: '2s' } });
    expect(run.code).toBe(2);
    expect(run.stderr).toContain('ROPEWATCH_BUSY_TIMEOUT_MS');
  });
});
