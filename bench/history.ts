/**
 * History-growth benchmark: what one more lab export costs as a site's history grows. A site of
 * 4 barns x 50 pens (a rope in every 4th pen, two assays) is stored with 5, 40 and 150 rounds and
 * its outputs built (the steady state of a running clinic); then one export of the next round is
 * dropped through the whole pipeline (`processFile`: ingest, commit, outputs). Each drop runs in
 * a child process of its own on a fresh copy of the prepared workspace, the sizes alternating
 * (5, 40, 150, 5, 40, 150, ...), so a load on the machine falls on all of them; each reports its
 * CPU time (process.cpuUsage: user + system of every thread) beside its wall time, and the files
 * and bytes the drop wrote. Ratios are against the 5-round drop of the same pair: median and range.
 * The analysis runs with the program's defaults (999 permutations, 2,000 simulated outbreaks).
 *
 *   npx tsx bench/history.ts [pairs] [sites]     (or: npm run bench -- history)
 *
 * With `sites` > 1 every site of the program holds the history and the export carries the next
 * round of all of them (a program's weekly export).
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ingestFile } from '../src/ingest/ingestFile.js';
import { regenerateOutputs } from '../src/outputs.js';
import { processFile } from '../src/pipeline.js';
import { openWorkspace, type WorkspacePaths } from '../src/workspace.js';
import { writeManySiteConfig } from '../test/helpers/hardening.js';
import { writeBigExport } from './ingest.js';
import type { BenchRow } from './types.js';

const HERE = path.dirname(fileURLToPath(import.meta.url));
const REPO = path.resolve(HERE, '..');
const HISTORIES = [5, 40, 150] as const;
const SHAPE = { barnsPerSite: 4, pensPerRow: 25 };
const EVERY = 4;
const NOW = new Date('2032-12-01T12:00:00Z');

interface DropReport {
  rounds: number;
  wallMs: number;
  cpuMs: number;
  processCpuMs: number;
  filesWritten: number;
  bytesWritten: number;
  outboxFiles: number;
  outboxBytes: number;
  peakRssMb: number;
}

function workspacePaths(dir: string): WorkspacePaths {
  return {
    configDir: path.join(dir, 'config'),
    dbFile: path.join(dir, 'store.db'),
    inbox: path.join(dir, 'inbox'),
    outbox: path.join(dir, 'outbox'),
  };
}

/** Rows of one round of every site: generous, the generator stops at the round's end. */
function rowsPerRound(sites: number): number {
  return sites * SHAPE.barnsPerSite * Math.ceil((2 * SHAPE.pensPerRow) / EVERY) * 2;
}

/** A workspace holding `rounds` rounds of every site with its outputs built. */
export async function prepare(root: string, sites: number, rounds: number): Promise<{ dir: string; drop: string }> {
  const dir = path.join(root, `history-${rounds}`);
  const paths = workspacePaths(dir);
  writeManySiteConfig(paths.configDir, { sites, ...SHAPE, programDefaults: true });
  fs.mkdirSync(paths.inbox, { recursive: true });
  const history = path.join(root, `nvdl_history_${rounds}.csv`);
  writeBigExport(history, rounds * rowsPerRound(sites), { sites, ...SHAPE }, EVERY);
  const drop = path.join(root, `nvdl_round_${rounds + 1}.csv`);
  writeBigExport(drop, rowsPerRound(sites), { sites, ...SHAPE }, EVERY, rounds);
  const ws = openWorkspace(
    paths,
    () => NOW,
    () => {},
  );
  try {
    const receipt = await ingestFile(history, { config: ws.config, store: ws.store, now: ws.now });
    if (receipt.status !== 'accepted') throw new Error(`history export refused: ${JSON.stringify(receipt.reason)}`);
    const started = performance.now();
    regenerateOutputs(ws);
    process.stderr.write(
      `bench history: ${rounds} rounds x ${sites} sites stored, outputs built in ${((performance.now() - started) / 1000).toFixed(1)} s\n`,
    );
  } finally {
    ws.close();
  }
  fs.rmSync(history, { force: true });
  return { dir, drop };
}

function walk(dir: string, visit: (file: string, stat: fs.Stats) => void): void {
  if (!fs.existsSync(dir)) return;
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    const full = path.join(dir, entry.name);
    if (entry.isDirectory()) walk(full, visit);
    else visit(full, fs.statSync(full));
  }
}

function peakRssMb(): number {
  const status = fs.readFileSync('/proc/self/status', 'utf8');
  const kb = /^VmHWM:\s*(\d+)\s*kB/m.exec(status);
  return kb ? Number(kb[1]) / 1024 : process.resourceUsage().maxRSS / 1024;
}

/** Child side: drop `file` into the workspace at `dir` and time `processFile`. */
async function runDrop(dir: string, file: string, rounds: number): Promise<void> {
  const paths = workspacePaths(dir);
  const target = path.join(paths.inbox, path.basename(file));
  fs.copyFileSync(file, target);
  const ws = openWorkspace(
    paths,
    () => NOW,
    () => {},
  );
  const startedAt = Date.now();
  const cpu0 = process.cpuUsage();
  const t0 = performance.now();
  const { receipt } = await processFile(ws, target);
  const wallMs = performance.now() - t0;
  const cpu = process.cpuUsage(cpu0);
  ws.close();
  if (receipt.status !== 'accepted') throw new Error(`drop refused: ${JSON.stringify(receipt.reason)}`);
  let filesWritten = 0;
  let bytesWritten = 0;
  let outboxFiles = 0;
  let outboxBytes = 0;
  walk(paths.outbox, (_, stat) => {
    outboxFiles++;
    outboxBytes += stat.size;
    if (stat.mtimeMs >= startedAt - 1) {
      filesWritten++;
      bytesWritten += stat.size;
    }
  });
  const total = process.cpuUsage();
  const report: DropReport = {
    rounds,
    wallMs,
    cpuMs: (cpu.user + cpu.system) / 1000,
    processCpuMs: (total.user + total.system) / 1000,
    filesWritten,
    bytesWritten,
    outboxFiles,
    outboxBytes,
    peakRssMb: peakRssMb(),
  };
  process.stdout.write(`${JSON.stringify(report)}\n`);
}

function spawnDrop(prepared: { dir: string; drop: string }, rounds: number, runDir: string): DropReport {
  fs.rmSync(runDir, { recursive: true, force: true });
  fs.cpSync(prepared.dir, runDir, { recursive: true });
  const t0 = performance.now();
  const run = spawnSync(
    process.execPath,
    ['--import', 'tsx', fileURLToPath(import.meta.url), '--child', runDir, prepared.drop, String(rounds)],
    { cwd: REPO, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 },
  );
  const processWallMs = performance.now() - t0;
  if (run.status !== 0) throw new Error(`bench history child failed (${run.status}): ${run.stderr}`);
  fs.rmSync(runDir, { recursive: true, force: true });
  const report = JSON.parse(run.stdout.trim().split('\n').at(-1)!) as DropReport;
  process.stderr.write(
    `bench history: drop at ${rounds} rounds: ${report.wallMs.toFixed(0)} ms wall, ${report.cpuMs.toFixed(0)} ms CPU (process ${report.processCpuMs.toFixed(0)} ms CPU, ${processWallMs.toFixed(0)} ms wall), ${report.filesWritten} files ${(report.bytesWritten / 1e6).toFixed(1)} MB written\n`,
  );
  return report;
}

function spread(values: number[]): { median: number; min: number; max: number } {
  const s = [...values].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return { median: s.length % 2 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2, min: s[0]!, max: s.at(-1)! };
}

const show = (r: { median: number; min: number; max: number }) =>
  `${r.median.toFixed(2)} (${r.min.toFixed(2)}-${r.max.toFixed(2)})`;

/** One drop per history size, `pairs` times alternating; ratios against the 5-round drop. */
export async function benchHistory(pairs = 3, sites = 1): Promise<BenchRow[]> {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-bench-history-'));
  try {
    const prepared = new Map<number, { dir: string; drop: string }>();
    for (const rounds of HISTORIES) prepared.set(rounds, await prepare(root, sites, rounds));
    const runs = new Map<number, DropReport[]>(HISTORIES.map((rounds) => [rounds, []]));
    for (let pair = 0; pair < pairs; pair++)
      for (const rounds of HISTORIES)
        runs.get(rounds)!.push(spawnDrop(prepared.get(rounds)!, rounds, path.join(root, 'run')));
    const base = runs.get(HISTORIES[0])!;
    const label = sites === 1 ? 'one site' : `${sites} sites`;
    const rows: BenchRow[] = [];
    for (const rounds of HISTORIES) {
      const these = runs.get(rounds)!;
      const cpu = spread(these.map((r, i) => r.cpuMs / base[i]!.cpuMs));
      const wall = spread(these.map((r, i) => r.wallMs / base[i]!.wallMs));
      const last = these.at(-1)!;
      rows.push({
        name: `drop one export (next round, ${label}) at ${rounds} rounds of history, CPU of processFile`,
        value: spread(these.map((r) => r.cpuMs)).median,
        unit: 'CPU ms',
        baseline: spread(base.map((r) => r.cpuMs)).median,
        ratio: cpu.median,
        note: `${pairs} alternating runs against the ${HISTORIES[0]}-round drop: CPU ratio ${show(cpu)}, wall ratio ${show(wall)}; wall ${spread(these.map((r) => r.wallMs)).median.toFixed(0)} ms; wrote ${last.filesWritten} files, ${(last.bytesWritten / 1e6).toFixed(1)} MB; outbox ${last.outboxFiles} files, ${(last.outboxBytes / 1e6).toFixed(1)} MB; peak RSS ${last.peakRssMb.toFixed(0)} MB`,
      });
    }
    return rows;
  } finally {
    fs.rmSync(root, { recursive: true, force: true });
  }
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/'));
if (invokedDirectly) {
  const [flag, dir, file, rounds] = process.argv.slice(2);
  if (flag === '--child') await runDrop(dir!, file!, Number(rounds));
  else
    process.stdout.write(
      `${JSON.stringify(await benchHistory(flag ? Number(flag) : undefined, dir ? Number(dir) : undefined), null, 2)}\n`,
    );
}
