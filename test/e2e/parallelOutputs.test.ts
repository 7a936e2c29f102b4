/**
 * Sites built at once on worker threads (src/siteBuild/pool.ts) write what the in-process build
 * writes: the same store, copied, is built with one job and with two, and the outboxes are
 * compared byte for byte, with the plans each build stored. A failing site fails the same way on
 * either path, and a worker that cannot start ends the build with an error instead of a hang.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import type { Site } from '../../src/config/types.js';
import { northfieldExport, type LabRow } from '../../src/demo/labFiles.js';
import { ingestFile } from '../../src/ingest/ingestFile.js';
import { OutputError, regenerateOutputs, type SiteBuild, siteLockFile } from '../../src/outputs.js';
import { handOutOrder, regenerateOutputsInParallel, workersFor } from '../../src/siteBuild/pool.js';
import { seededRng } from '../../src/util/random.js';
import { openWorkspace, type Workspace, type WorkspacePaths } from '../../src/workspace.js';
import { patternSampleId, writeManySiteConfig } from '../helpers/hardening.js';
import { runCli } from '../helpers/runCli.js';
import { treeHashes, workspacesPerTest } from '../helpers/workspace.js';
import { parseStoreLocation } from '../../src/store/location.js';
import { copyTestStore, testStoreLocation } from '../helpers/testStore.js';

const demoWorkspace = workspacesPerTest();

const SITES = 4;
const ROUND_DAYS = ['2026-09-01', '2026-09-15', '2026-09-29'];
const NOW = new Date('2026-10-02T12:00:00Z');

let roots: string[] = [];
afterEach(() => {
  for (const root of roots) fs.rmSync(root, { recursive: true, force: true });
  roots = [];
});

/** The store of each workspace folder: what --db takes (on the PostgreSQL run, a database of its own). */
const storeOf = new Map<string, string>();

/** A workspace's paths under `dir`. */
function pathsIn(dir: string): WorkspacePaths & { db: string } {
  let db = storeOf.get(dir);
  if (db === undefined) {
    db = testStoreLocation(path.join(dir, 'store.db'), 'parallel').location;
    storeOf.set(dir, db);
  }
  return {
    configDir: path.join(dir, 'config'),
    storeLocation: parseStoreLocation(db),
    db,
    inbox: path.join(dir, 'inbox'),
    outbox: path.join(dir, 'outbox'),
  };
}

const open = (dir: string): Workspace =>
  openWorkspace(
    pathsIn(dir),
    () => NOW,
    () => {},
  );

/**
 * A store of SITES generated sites (two barns of 2 x 6 pens) with three rounds of PRRSV results,
 * a rope in every other pen, seeded Cts (some positive), outputs never built. Returns its folder.
 */
async function preparedStore(): Promise<string> {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-parallel-'));
  roots.push(root);
  const dir = path.join(root, 'prepared');
  const paths = pathsIn(dir);
  writeManySiteConfig(paths.configDir, { sites: SITES, barnsPerSite: 2, pensPerRow: 6 });
  fs.mkdirSync(paths.inbox, { recursive: true });
  const rng = seededRng(31);
  const rows: LabRow[] = [];
  for (let site = 0; site < SITES; site++)
    for (const day of ROUND_DAYS)
      for (let barn = 1; barn <= 2; barn++)
        for (let pen = 1 + (site % 2); pen <= 12; pen += 2) {
          const draw = rng();
          const ct = draw < 0.7 ? null : Math.round((26 + rng() * 12) * 10) / 10;
          rows.push({
            sampleId: patternSampleId(site, barn, pen, day.replaceAll('-', '')),
            assay: 'PRRSV',
            ct,
            collectedOn: day,
          });
        }
  const file = path.join(paths.inbox, 'history.csv');
  fs.writeFileSync(file, northfieldExport(rows, '2026-10-01', 1));
  const ws = open(dir);
  try {
    const receipt = await ingestFile(file, { config: ws.config, store: ws.store, now: ws.now });
    expect(receipt.status).toBe('accepted');
  } finally {
    ws.close();
  }
  return dir;
}

/** A copy of the prepared folder (store and configuration), opened. */
function copyOf(prepared: string, name: string): Workspace {
  const dir = path.join(path.dirname(prepared), name);
  fs.cpSync(prepared, dir, { recursive: true });
  storeOf.set(dir, copyTestStore(pathsIn(prepared).db, path.join(dir, 'store.db')));
  return open(dir);
}

/** The plans a build stored, by sample ID (what the next drop's rope sheets resolve against). */
const plans = (ws: Workspace) =>
  ws.store
    .plannedRopes()
    .map((rope) => JSON.stringify(rope))
    .sort();

describe('building sites on worker threads', () => {
  it('writes the same outbox and stores the same plans as the build in one thread', { timeout: 120_000 }, async () => {
    const prepared = await preparedStore();
    const serial = copyOf(prepared, 'serial');
    const parallel = copyOf(prepared, 'parallel');
    try {
      const told: string[] = [];
      const one = regenerateOutputs(serial, undefined, { full: true });
      const two = await regenerateOutputsInParallel(parallel, undefined, {
        full: true,
        jobs: 2,
        onSite: (site, place, of) => told.push(`${place}/${of} ${site.id}`),
      });
      expect(two).toEqual(one);
      expect(one).toHaveLength(SITES);
      expect(one.every((build: SiteBuild) => build.rounds.length === ROUND_DAYS.length)).toBe(true);
      const serialFiles = treeHashes(serial.outbox);
      expect(Object.keys(serialFiles).length).toBeGreaterThan(SITES * ROUND_DAYS.length * 4);
      expect(treeHashes(parallel.outbox)).toEqual(serialFiles);
      expect(plans(parallel)).toEqual(plans(serial));
      // Every site handed out once, counted 1..SITES.
      expect(told.map((line) => line.split(' ')[0])).toEqual(['1/4', '2/4', '3/4', '4/4']);
      expect(new Set(told.map((line) => line.split(' ')[1])).size).toBe(SITES);
    } finally {
      serial.close();
      parallel.close();
    }
  });

  it('fails a site that cannot be written with the error the one-thread build gives, and writes the others', {
    timeout: 120_000,
  }, async () => {
    const prepared = await preparedStore();
    const failures: string[] = [];
    for (const [name, jobs] of [
      ['serial', 1],
      ['parallel', 2],
    ] as const) {
      const ws = copyOf(prepared, name);
      try {
        const blocked = ws.config.sites[1]!.id;
        fs.mkdirSync(ws.outbox, { recursive: true });
        // A file where the site's folder goes: its build cannot make the folder.
        fs.writeFileSync(path.join(ws.outbox, blocked), 'not a folder');
        const error = await regenerateOutputsInParallel(ws, undefined, { full: true, jobs }).catch((e: unknown) => e);
        expect(error).toBeInstanceOf(OutputError);
        expect((error as OutputError).siteIds).toEqual([blocked]);
        failures.push((error as OutputError).message.replaceAll(ws.outbox, '<outbox>'));
        for (const site of ws.config.sites.filter((s) => s.id !== blocked))
          expect(fs.existsSync(path.join(ws.outbox, site.id, 'next-round.csv')), site.id).toBe(true);
      } finally {
        ws.close();
      }
    }
    expect(failures[1]).toBe(failures[0]);
    expect(failures[0]).toMatch(/EEXIST|ENOTDIR/);
  });

  it('ends with an error naming the sites not built when a worker cannot open the workspace', {
    timeout: 120_000,
  }, async () => {
    const prepared = await preparedStore();
    const ws = copyOf(prepared, 'changed');
    try {
      // The configuration changes after this process loaded it: a worker loads another one and refuses.
      fs.appendFileSync(path.join(ws.configDir, 'sites.yaml'), '# changed\n');
      const error = await regenerateOutputsInParallel(ws, undefined, { full: true, jobs: 2 }).catch((e: unknown) => e);
      expect(error).toBeInstanceOf(OutputError);
      expect((error as OutputError).message).toMatch(/configuration .* changed/);
      expect((error as OutputError).siteIds).toEqual(ws.config.sites.map((site) => site.id));
    } finally {
      ws.close();
    }
  });

  it('rejects with the error of a progress callback that throws, and ends the workers', {
    timeout: 120_000,
  }, async () => {
    const prepared = await preparedStore();
    const ws = copyOf(prepared, 'callback');
    try {
      const broken = new Error('progress display gone');
      const error = await regenerateOutputsInParallel(ws, undefined, {
        full: true,
        jobs: 2,
        onSite: (_, place) => {
          if (place === 3) throw broken;
        },
      }).catch((e: unknown) => e);
      expect(error).toBe(broken);
      // The workers ended in the middle of their sites: no site's output lock is left holding
      // this process's pid, so a build in this process right after does not wait on one.
      for (const site of ws.config.sites) expect(fs.existsSync(siteLockFile(ws.outbox, site.id)), site.id).toBe(false);
      expect(regenerateOutputs(ws, undefined, { full: true })).toHaveLength(ws.config.sites.length);
    } finally {
      ws.close();
    }
  });
});

describe('the pool size and the hand-out order', () => {
  it('uses one worker per site at most, and never fewer than one', () => {
    expect(workersFor(1, 8)).toBe(1);
    expect(workersFor(5, 2)).toBe(2);
    expect(workersFor(0, 2)).toBe(1);
    expect(() => workersFor(5, 0)).toThrow(RangeError);
  });

  it('hands out the sites with the most pens first, in configuration order among equals', () => {
    const site = (pens: number) => ({ barns: [{ pens: Array.from({ length: pens }) }] }) as unknown as Site;
    expect(handOutOrder([site(10), site(30), site(10), site(20)])).toEqual([1, 3, 0, 2]);
  });
});

describe('report --jobs', () => {
  it('refuses a number of jobs below 1 or not whole, as a usage error', async () => {
    const ws = demoWorkspace();
    for (const jobs of ['0', '1.5', 'many']) {
      const run = await runCli(['report', '--jobs', jobs, ...ws.cliFlags]);
      expect(run.code, jobs).toBe(2);
      expect(run.stderr, jobs).toContain('--jobs');
    }
  });

  it('writes the same outbox with one job as with the default', { timeout: 120_000 }, async () => {
    const prepared = await preparedStore();
    const flags = (name: string) => {
      const dir = path.join(path.dirname(prepared), name);
      fs.cpSync(prepared, dir, { recursive: true });
      const paths = pathsIn(dir);
      return ['--config', paths.configDir, '--db', paths.db, '--inbox', paths.inbox, '--outbox', paths.outbox];
    };
    const runs = [await runCli(['report', '--jobs', '1', ...flags('one')]), await runCli(['report', ...flags('many')])];
    for (const run of runs) expect(run.code, run.stderr).toBe(0);
    expect(runs[0]!.stdout.trim().split('\n')).toHaveLength(SITES);
    expect(runs[1]!.stdout).toBe(runs[0]!.stdout);
    const outbox = (name: string) => pathsIn(path.join(path.dirname(prepared), name)).outbox;
    expect(treeHashes(outbox('many'), ['receipts'])).toEqual(treeHashes(outbox('one'), ['receipts']));
  });
});
