import fs from 'node:fs';
import path from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, describe, expect, it } from 'vitest';
import { ingestFiles } from '../../src/cli/runFiles.js';
import { openWorkspace } from '../../src/workspace.js';
import { NORTHFIELD_HEADER, northfieldLine } from '../helpers/hardening.js';
import { FIXED_NOW, makeWorkspace, type TestWorkspace } from '../helpers/workspace.js';

let made: TestWorkspace | undefined;
afterEach(() => made?.cleanup());

describe('a writer that cannot get the write lock in time', () => {
  it('says so in one line, stores nothing and leaves the file in the inbox', async () => {
    made = makeWorkspace();
    const { paths } = made;
    // Create the store, then hold its write lock from another connection (another process's
    // long transaction, as SQLite sees it: BEGIN IMMEDIATE takes the RESERVED lock).
    openWorkspace(
      paths,
      () => FIXED_NOW,
      () => {},
    ).close();
    const holder = new Database(paths.dbFile);
    holder.exec('BEGIN IMMEDIATE');
    const file = path.join(paths.inbox, 'nvdl_busy.csv');
    fs.writeFileSync(file, `${NORTHFIELD_HEADER.join(',')}\n${northfieldLine('C1', 'HCF01-005', 'PRRSV', '30.1')}\n`);
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
});
