/**
 * `ropewatch watch` end to end, in-process (src/cli/main.ts with an io whose stopSignal the test
 * resolves): a burst of 200 real result exports dropped at once, half written in place and half
 * written as `.part` and renamed into the inbox (the safe way to drop over a share). Expected
 * (src/watch/watchInbox.ts): each file is processed exactly once, one at a time, and archived;
 * the unit-level behaviour (stability gate, de-duplicated queue, rename) is in test/watch.
 * The exports name samples no rope sheet knows, so each file is stored without rewriting site
 * outputs: the test measures the watcher and the store, not the analysis.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.js';
import { lookIntoStore, northfieldLine, NORTHFIELD_HEADER } from '../helpers/hardening.js';
import { FIXED_NOW, makeWorkspace, type TestWorkspace } from '../helpers/workspace.js';

const FILES = 200;
const ROWS_PER_FILE = 4;

let workspaces: TestWorkspace[] = [];
afterEach(() => {
  for (const ws of workspaces) ws.cleanup();
  workspaces = [];
});

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

async function until(condition: () => boolean, timeoutMs: number, what: string): Promise<void> {
  const started = Date.now();
  while (!condition()) {
    if (Date.now() - started > timeoutMs) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await sleep(25);
  }
}

function exportBytes(fileIndex: number): string {
  const lines: string[] = [NORTHFIELD_HEADER.join(',')];
  for (let row = 0; row < ROWS_PER_FILE; row++) {
    const sample = `W${String(fileIndex).padStart(3, '0')}-${row}`;
    lines.push(
      northfieldLine(
        `NV26-${fileIndex}-${row}`,
        sample,
        row % 2 === 0 ? 'PRRSV' : 'IAV',
        row === 0 ? '31.5' : 'Undetermined',
      ),
    );
  }
  return lines.join('\n') + '\n';
}

describe('ropewatch watch with a burst of drops', () => {
  it('processes each of 200 files dropped at once exactly once and archives them all', async () => {
    const ws = makeWorkspace();
    workspaces.push(ws);
    let stdout = '';
    let stderr = '';
    let stop!: () => void;
    const stopSignal = new Promise<void>((resolve) => (stop = resolve));
    const running = main(['watch', ...ws.cliFlags, '--stable-ms', '150'], {
      stdout: (text) => (stdout += text),
      stderr: (text) => (stderr += text),
      cwd: ws.root,
      now: () => FIXED_NOW,
      env: {},
      stopSignal,
    });
    try {
      await until(() => stdout.includes('quiet period'), 15_000, 'the watcher to be ready');
      for (let i = 0; i < FILES; i++) {
        const name = `nvdl_burst_${String(i).padStart(3, '0')}.csv`;
        if (i % 2 === 0) fs.writeFileSync(path.join(ws.paths.inbox, name), exportBytes(i));
        else {
          const part = path.join(ws.paths.inbox, `${name}.part`);
          fs.writeFileSync(part, exportBytes(i));
          fs.renameSync(part, path.join(ws.paths.inbox, name));
        }
      }
      const archive = path.join(ws.paths.inbox, 'archive');
      await until(
        () => fs.existsSync(archive) && fs.readdirSync(archive).length >= FILES,
        45_000,
        `${FILES} archived files`,
      );
      // Give a late duplicate event the chance to show up before stopping.
      await sleep(500);
    } finally {
      stop();
    }
    expect(await running, stderr).toBe(0);
    expect(stderr).toBe('');

    const look = lookIntoStore(ws.paths.db);
    expect(look.integrity).toBe('ok');
    expect(look.files).toHaveLength(FILES);
    expect(new Set(look.files.map((file) => file.name)).size).toBe(FILES);
    expect(look.files.every((file) => file.status === 'accepted' && file.rowsAccepted === ROWS_PER_FILE)).toBe(true);
    expect(look.results).toBe(FILES * ROWS_PER_FILE);
    // Each file was read once: one "accepted" line per file, no "skipped" (a second read).
    expect(stdout.match(/^\S+Z accepted nvdl_burst_/gm)).toHaveLength(FILES);
    expect(stdout).not.toMatch(/^\S+Z skipped/m);
    const archived = fs.readdirSync(path.join(ws.paths.inbox, 'archive')).sort();
    expect(archived).toHaveLength(FILES);
    // No "name.<hash>.csv" second copies: nothing was archived twice.
    expect(archived.every((name) => /^nvdl_burst_\d{3}\.csv$/.test(name))).toBe(true);
    expect(fs.readdirSync(ws.paths.inbox).filter((name) => name.endsWith('.csv') || name.endsWith('.part'))).toEqual(
      [],
    );
  });
});
