/**
 * Crash mid-ingest: a real `ropewatch ingest` child process is killed with SIGKILL while it stores
 * the rows of a large export. The store's promise (src/store/writer.ts): one transaction per file
 * (BEGIN IMMEDIATE ... COMMIT), so after any crash it holds all rows of the file or none, and the
 * file moves out of the inbox only after the commit (src/pipeline.ts), so a second run finishes it.
 * SQLite's WAL recovery discards frames of a transaction that never committed (SQLite
 * documentation, "Write-Ahead Logging", section on recovery). Large files are read on a parse
 * worker thread and smaller ones on the main thread: both are killed mid-file.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PARSE_IN_WORKER_FROM_BYTES } from '../../src/ingest/ingestFile.js';
import { bigNorthfieldExport, lookIntoStore, processWorkspace, spawnCli } from '../helpers/hardening.js';
import { storedResults, waitForFileTransaction, waitForStored } from '../helpers/storeProbe.js';

/**
 * Rows of the exports: enough that storing takes well over a second on a slow CI core; the
 * larger is read on the parse worker, the smaller on the main thread (checked below).
 */
const WORKER_ROWS = 60_000;
const MAIN_THREAD_ROWS = 30_000;
/**
 * Where to kill, as the share of the export the child has read since it took the store's write
 * lock (its file transaction began): early, halfway, and near the end of the rows. Progress is
 * the child's `rchar` in /proc/<pid>/io (proc(5)); the parser reads with back-pressure, so what
 * has been read is at most a few chunks ahead of what has been stored.
 */
const CASES = [
  { rows: WORKER_ROWS, share: 0.15 },
  { rows: WORKER_ROWS, share: 0.5 },
  { rows: WORKER_ROWS, share: 0.85 },
  { rows: MAIN_THREAD_ROWS, share: 0.5 },
];

let root: string;
const exports = new Map<number, Buffer>();
beforeAll(() => {
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-crash-'));
  for (const rows of [WORKER_ROWS, MAIN_THREAD_ROWS]) exports.set(rows, bigNorthfieldExport(rows));
  expect(exports.get(WORKER_ROWS)!.length).toBeGreaterThanOrEqual(PARSE_IN_WORKER_FROM_BYTES);
  expect(exports.get(MAIN_THREAD_ROWS)!.length).toBeLessThan(PARSE_IN_WORKER_FROM_BYTES);
});
afterAll(() => fs.rmSync(root, { recursive: true, force: true }));

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

const workspace = (name: string) => processWorkspace(root, name);

/** Bytes the process has read so far (proc(5), /proc/<pid>/io `rchar`); undefined once it is gone. */
function bytesRead(pid: number): number | undefined {
  try {
    const match = /^rchar:\s*(\d+)/m.exec(fs.readFileSync(`/proc/${pid}/io`, 'utf8'));
    return match ? Number(match[1]) : undefined;
  } catch {
    return undefined;
  }
}

async function waitForBytesRead(pid: number, atLeast: number, timeoutMs: number): Promise<void> {
  const started = Date.now();
  while (Date.now() - started < timeoutMs) {
    const read = bytesRead(pid);
    if (read === undefined || read >= atLeast) return;
    await sleep(5);
  }
}

describe('a crash (SIGKILL) while an export is being stored', () => {
  it.each(CASES)(
    'leaves all rows or none, keeps the file in the inbox, and a second run stores it completely ($rows rows, killed after reading $share of them)',
    async ({ rows: ROWS, share }) => {
      const bytes = exports.get(ROWS)!;
      const ws = workspace(`kill-${ROWS}-${share}`);
      const file = path.join(ws.paths.inbox, 'nvdl_big.csv');
      fs.writeFileSync(file, bytes);

      const first = spawnCli(['ingest', file, ...ws.flags]);
      await waitForFileTransaction(ws.paths.db, 30_000);
      const readBefore = bytesRead(first.child.pid!) ?? 0;
      await waitForBytesRead(first.child.pid!, readBefore + share * bytes.length, 30_000);
      first.child.kill('SIGKILL');
      const killed = await first.done;
      // The kill must land while the child is still working, or the test proves nothing.
      expect(killed.signal, killed.stdout + killed.stderr).toBe('SIGKILL');

      const afterCrash = lookIntoStore(ws.paths.db);
      expect(afterCrash.integrity).toBe('ok');
      const stored = afterCrash.resultsByFile['nvdl_big.csv'] ?? 0;
      // All or nothing: one transaction per file.
      expect([0, ROWS]).toContain(stored);
      if (stored === 0) expect(afterCrash.files).toEqual([]);
      // The file moves only after the commit: it is still waiting in the inbox.
      expect(fs.existsSync(file)).toBe(true);
      expect(fs.existsSync(path.join(ws.paths.inbox, 'archive', 'nvdl_big.csv'))).toBe(false);

      const second = await spawnCli(['ingest', file, ...ws.flags]).done;
      expect(second.code, second.stderr).toBe(0);
      const afterRetry = lookIntoStore(ws.paths.db);
      expect(afterRetry.integrity).toBe('ok');
      expect(afterRetry.resultsByFile['nvdl_big.csv']).toBe(ROWS);
      expect(afterRetry.files.filter((f) => f.name === 'nvdl_big.csv')).toHaveLength(1);
      expect(fs.existsSync(file)).toBe(false);
      expect(fs.existsSync(path.join(ws.paths.inbox, 'archive', 'nvdl_big.csv'))).toBe(true);
    },
  );
});

/**
 * A crash while outputs are written. Outputs are written after the file's commit (src/pipeline.ts,
 * src/outputs.ts), so whatever the moment of the kill, no output shows a result the store does
 * not hold; a run after the crash brings the outputs up to date.
 */
describe('a crash (SIGKILL) around the outputs of a file', () => {
  const KILL_AFTER_COMMIT_MS = [0, 25, 75];

  it('leaves no output showing a result the store does not hold, and the next run brings outputs up to date', async () => {
    const { loadConfig } = await import('../../src/config/load.js');
    const { northfieldExport, ropeSheet } = await import('../../src/demo/scenario.js');
    const outcomes: string[] = [];
    let betweenCommitAndOutputs = 0;
    for (const delay of KILL_AFTER_COMMIT_MS) {
      const ws = workspace(`outputs-${delay}`);
      const site = loadConfig(ws.paths.config).siteById.get('HOLLOW-CREEK')!;
      const ropes = site.barns[0]!.pens.slice(0, 30).map((pen, index) => ({
        sampleId: `CR-${String(index).padStart(3, '0')}`,
        barnId: site.barns[0]!.id,
        penId: pen.id,
        hungOn: '2026-08-03',
      }));
      const sheet = path.join(ws.paths.inbox, 'ropes.csv');
      fs.writeFileSync(sheet, ropeSheet(site, ropes));
      expect((await spawnCli(['ingest', sheet, ...ws.flags]).done).code).toBe(0);

      // The marker: one positive, CR-007; every other rope negative.
      const results = path.join(ws.paths.inbox, 'nvdl_results.csv');
      fs.writeFileSync(
        results,
        northfieldExport(
          ropes.map((rope) => ({
            sampleId: rope.sampleId,
            assay: 'PRRSV' as const,
            ct: rope.sampleId === 'CR-007' ? 24.2 : null,
            collectedOn: '2026-08-03',
          })),
          '2026-08-06',
          1,
        ),
      );
      const run = spawnCli(['ingest', results, ...ws.flags]);
      // Kill once the file's commit is visible (a read-only look: WAL readers never wait on the
      // writer), plus the delay: the kill lands while the outputs are being written.
      await waitForStored(ws.paths.db, 'CR-007', 30_000);
      await sleep(delay);
      run.child.kill('SIGKILL');
      await run.done;

      const stored = storedResults(ws.paths.db, 'CR-007');
      const positivePensShown = (): string[] => {
        const siteDir = path.join(ws.paths.outbox, 'hollow-creek');
        if (!fs.existsSync(siteDir)) return [];
        return (fs.readdirSync(siteDir, { recursive: true, encoding: 'utf8' }) as string[])
          .filter((entry) => entry.endsWith('summary.json'))
          .flatMap((entry) => {
            const summary = JSON.parse(fs.readFileSync(path.join(siteDir, entry), 'utf8')) as {
              barns: { assays: { positivePens: string[] }[] }[];
            };
            return summary.barns.flatMap((barn) => barn.assays.flatMap((assay) => assay.positivePens));
          });
      };
      const shown = positivePensShown().length > 0;
      outcomes.push(`${delay} ms: stored ${stored}, shown ${shown}`);
      if (stored === 1 && !shown) betweenCommitAndOutputs++;
      // Nothing shown that is not stored.
      if (stored === 0) expect(shown, outcomes.join('; ')).toBe(false);

      // Any later run brings the outbox up to the store (here: the same file again).
      const again = await spawnCli([
        'ingest',
        ...(fs.existsSync(results) ? [results] : [sheet.replace('ropes.csv', 'archive/ropes.csv')]),
        ...ws.flags,
      ]).done;
      expect(again.code, again.stderr).toBe(0);
      const positivePens = positivePensShown();
      expect(positivePens, outcomes.join('; ')).toEqual([ropes[7]!.penId]);
    }
    // At least one kill must land after the commit and before the outputs are complete (the
    // analysis and pages of the site take far longer than the commit of 30 rows), or the catch-up
    // is not exercised.
    expect(betweenCommitAndOutputs, outcomes.join('; ')).toBeGreaterThan(0);
  });
});
