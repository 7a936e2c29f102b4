/**
 * Ingest benchmark: the ingest code (`ingestFile`: hash, sniff, read, map, store in one
 * transaction, commit; outputs left out) on a generated lab export of 1,000,000 result rows over
 * 50 invented sites, against the keyed floor on the same file: csv-parse streaming the rows into
 * one prepared INSERT (ON CONFLICT DO NOTHING) on a table with a UNIQUE index on the lab's key
 * (sample ID, test, case number), one transaction, the store's pragmas (WAL, synchronous FULL).
 * Both sides are timed the same way: from the first byte read to the commit, opening and closing
 * the database outside the timing; CPU time (user + system of the whole process, both threads)
 * beside wall time. The whole pipeline with outputs (`processFile`) is timed on one round of
 * every site.
 *
 * Generation happens before any timing. Every run is a child process of its own, so that its
 * peak RSS (VmHWM, proc(5)) belongs to it alone, and it runs the compiled program (dist/, as
 * installed; `npm run bench` builds it): from the TypeScript sources the parse worker would
 * compile its modules through tsx on its own thread, inside the timing, work the program never
 * does. The 1M-row comparison is repeated REPEATS times, floor and ingest alternating, and the
 * median of the per-pair ratios is reported with their
 * range (on a shared machine one pair can be off by a third). Peak memory is compared at 1M and
 * 2M rows: streaming keeps it flat. Every part prints its checksum (rows stored).
 *
 *   npx tsx bench/ingest.ts            (or: npm run bench -- ingest)
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import Database from 'better-sqlite3';
import { parse } from 'csv-parse';
import { addDays, format } from 'date-fns';
import type { ingestFile } from '../src/ingest/ingestFile.js';
import type { processFile } from '../src/pipeline.js';
import type { openWorkspace, Workspace, WorkspacePaths } from '../src/workspace.js';
import type { StoreLocation } from '../src/workspacePaths.js';
import { compiledBin } from '../test/helpers/compiledCli.js';
import { NORTHFIELD_HEADER, northfieldLine, patternSampleId, writeManySiteConfig } from '../test/helpers/hardening.js';
import type { PairedRatio, Timing } from './pairs.js';
import type { BenchRow } from './types.js';

const HERE = path.dirname(fileURLToPath(import.meta.url));
const REPO = path.resolve(HERE, '..');

/** 50 sites x 4 barns x 2 rows x 25 pens = 10,000 pens; 2 assays per rope. */
export const SHAPE = Object.freeze({ sites: 50, barnsPerSite: 4, pensPerRow: 25 });
const ASSAYS = ['PRRSV', 'IAV'] as const;
const FIRST_ROUND = new Date(2026, 0, 5);

/**
 * Writes an export of `rows` rows: every `every`-th pen of every barn roped each round (rounds
 * 14 days apart, the start moving one pen per round), one row per rope and assay, sample IDs in each site's pattern (no rope sheet needed).
 * `firstRound` shifts the dates (round k starts 14 k days after the first), so a later export
 * continues an earlier one. The pens roped and the positives repeat every 40 rounds; `patternShift`
 * moves them on by that many rounds, so that exports dropped after histories of different lengths
 * carry the same pens and positives, as do the rounds before them (bench/workspaces.ts). Streams
 * to disk in blocks; returns the number of rounds.
 */
export function writeBigExport(
  file: string,
  rows: number,
  shape: { sites: number; barnsPerSite: number; pensPerRow: number } = SHAPE,
  every = 1,
  firstRound = 0,
  patternShift = 0,
): number {
  const pensPerBarn = 2 * shape.pensPerRow;
  const perRound = shape.sites * shape.barnsPerSite * Math.ceil(pensPerBarn / every) * ASSAYS.length;
  const rounds = Math.ceil(rows / perRound);
  const fd = fs.openSync(file, 'w');
  try {
    let block: string[] = [NORTHFIELD_HEADER.join(',')];
    let written = 0;
    const flush = () => {
      fs.writeSync(fd, `${block.join('\n')}\n`);
      block = [];
    };
    for (let round = firstRound; round < firstRound + rounds && written < rows; round++) {
      const day = addDays(FIRST_ROUND, 14 * round);
      const iso = format(day, 'yyyy-MM-dd');
      const compact = format(day, 'yyyyMMdd');
      const reported = format(addDays(day, 3), 'yyyy-MM-dd');
      const pattern = round + patternShift;
      for (let site = 0; site < shape.sites && written < rows; site++) {
        for (let barn = 1; barn <= shape.barnsPerSite && written < rows; barn++) {
          for (let pen = 1; pen <= pensPerBarn && written < rows; pen++) {
            // Every `every`-th pen, the start moving one pen each round (systematic sampling).
            if ((pen + pattern) % every !== 0) continue;
            const sampleId = patternSampleId(site, barn, pen, compact);
            for (const assay of ASSAYS) {
              if (written >= rows) break;
              // About one rope in 40 positive, with a Ct between 24 and 36.
              const positive = (site * 7 + barn * 3 + pen * 11 + pattern * 5) % 40 === 0 && assay === 'PRRSV';
              block.push(
                northfieldLine(
                  `NV-${written}`,
                  sampleId,
                  assay,
                  positive ? (24 + ((pen + pattern) % 120) / 10).toFixed(1) : 'Undetermined',
                  iso,
                  reported,
                ),
              );
              written++;
              if (block.length >= 10_000) flush();
            }
          }
        }
      }
    }
    flush();
  } finally {
    fs.closeSync(fd);
  }
  return rounds;
}

type ChildMode = 'store' | 'pipeline' | 'baseline';

/** Floor and ingest runs on the 1M-row file, alternating. */
const REPEATS = 3;

interface ChildReport {
  mode: ChildMode;
  rows: number;
  stored: number;
  ms: number;
  /** User + system CPU time of the whole process (every thread) over the timed part. */
  cpuMs: number;
  siteRounds: number;
  peakRssMb: number;
}

/** Wall and CPU time of `run`, CPU for the whole process (process.cpuUsage counts every thread). */
async function timed<T>(run: () => Promise<T>): Promise<{ result: T; ms: number; cpuMs: number }> {
  const cpu0 = process.cpuUsage();
  const started = performance.now();
  const result = await run();
  const ms = performance.now() - started;
  const cpu = process.cpuUsage(cpu0);
  return { result, ms, cpuMs: (cpu.user + cpu.system) / 1000 };
}

function peakRssMb(): number {
  const status = fs.readFileSync('/proc/self/status', 'utf8');
  const kb = /^VmHWM:\s*(\d+)\s*kB/m.exec(status);
  return kb ? Number(kb[1]) / 1024 : process.resourceUsage().maxRSS / 1024;
}

/** A bench workspace's folders under `dir`, on the store at `storeLocation`. */
export function benchPaths(dir: string, storeLocation: StoreLocation): WorkspacePaths {
  return {
    configDir: path.join(dir, 'config'),
    storeLocation,
    inbox: path.join(dir, 'inbox'),
    outbox: path.join(dir, 'outbox'),
  };
}

/** The compiled program's entry points that a timed child calls. */
export interface CompiledIngest {
  ingestFile: typeof ingestFile;
  processFile: typeof processFile;
  openWorkspace: typeof openWorkspace;
}

/**
 * The ingest entry points from dist/ (as installed), not the sources: a child started with tsx
 * would otherwise load them, and the parse worker they start, through the TypeScript loader.
 * @throws when dist/ is missing or older than src/ (compiledBin).
 */
export async function compiledIngest(): Promise<CompiledIngest> {
  compiledBin();
  const load = (module: string) => import(pathToFileURL(path.join(REPO, 'dist', module)).href);
  const [ingest, pipeline, workspace] = await Promise.all([
    load('ingest/ingestFile.js'),
    load('pipeline.js'),
    load('workspace.js'),
  ]);
  return { ingestFile: ingest.ingestFile, processFile: pipeline.processFile, openWorkspace: workspace.openWorkspace };
}

/**
 * Opens the workspace with the bench's fixed clock through `open` (the compiled program's, from
 * compiledIngest), `file` copied into its inbox (its path there is `target`).
 */
export function benchWorkspace(
  paths: WorkspacePaths,
  file: string,
  open: typeof openWorkspace,
): { ws: Workspace; target: string } {
  fs.mkdirSync(paths.inbox, { recursive: true });
  const target = path.join(paths.inbox, path.basename(file));
  fs.copyFileSync(file, target);
  const ws = open(
    paths,
    () => new Date('2026-12-01T12:00:00Z'),
    () => {},
  );
  return { ws, target };
}

/**
 * Child side, in a fresh workspace under `dir`. `pipeline`: `processFile`, outputs included.
 * `store`: `ingestFile` (hash, sniff, parse, map, store, commit) with the outputs step left out,
 * which is what the ingest code itself costs; the outputs are timed by bench/recompute.ts.
 */
async function runChild(mode: ChildMode, file: string, dir: string, rows: number): Promise<void> {
  if (mode === 'baseline') {
    fs.mkdirSync(dir, { recursive: true });
    const { ms, cpuMs, stored } = await keyedFloor(file, path.join(dir, 'floor.db'));
    process.stdout.write(
      JSON.stringify({ mode, rows, stored, ms, cpuMs, siteRounds: 0, peakRssMb: peakRssMb() } satisfies ChildReport) +
        '\n',
    );
    return;
  }
  const program = await compiledIngest();
  const paths = benchPaths(dir, { kind: 'sqlite', file: path.join(dir, 'store.db') });
  const { ws, target } = benchWorkspace(paths, file, program.openWorkspace);
  const {
    result: receipt,
    ms,
    cpuMs,
  } = await timed(async () =>
    mode === 'pipeline'
      ? (await program.processFile(ws, target)).receipt
      : await program.ingestFile(target, { config: ws.config, store: ws.store, now: ws.now }),
  );
  const siteRounds =
    mode === 'pipeline'
      ? ws.config.sites.reduce(
          (sum, site) =>
            sum +
            (fs.existsSync(path.join(paths.outbox, site.id))
              ? fs.readdirSync(path.join(paths.outbox, site.id)).filter((entry) => /^r\d+-/.test(entry)).length
              : 0),
          0,
        )
      : 0;
  const stored = ws.store.counts().results;
  ws.close();
  if (receipt.status !== 'accepted') throw new Error(`bench export refused: ${JSON.stringify(receipt.reason)}`);
  const report: ChildReport = { mode, rows, stored, ms, cpuMs, siteRounds, peakRssMb: peakRssMb() };
  process.stdout.write(`${JSON.stringify(report)}\n`);
}

function spawnChild(mode: ChildMode, file: string, dir: string, rows: number): ChildReport {
  const run = spawnSync(
    process.execPath,
    ['--import', 'tsx', fileURLToPath(import.meta.url), '--child', mode, file, dir, String(rows)],
    { cwd: REPO, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 },
  );
  if (run.status !== 0) throw new Error(`bench child failed (${run.status}): ${run.stderr}`);
  return JSON.parse(run.stdout.trim().split('\n').at(-1)!) as ChildReport;
}

/**
 * The keyed floor: csv-parse streaming the file into one prepared INSERT on a table with a UNIQUE
 * index on the lab's key (sample ID, test, case number; ON CONFLICT DO NOTHING), one transaction,
 * the store's pragmas. Timed from the first byte read to the commit, like the ingest code.
 */
export async function keyedFloor(file: string, dbFile: string): Promise<{ ms: number; cpuMs: number; stored: number }> {
  const db = new Database(dbFile);
  db.pragma('journal_mode = WAL');
  db.pragma('synchronous = FULL');
  db.exec(
    'CREATE TABLE rows (case_no TEXT, sample_id TEXT, test TEXT, ct TEXT, call TEXT, control TEXT, collected TEXT, reported TEXT, status TEXT)',
  );
  db.exec('CREATE UNIQUE INDEX rows_key ON rows (sample_id, test, case_no)');
  const insert = db.prepare('INSERT INTO rows VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?) ON CONFLICT DO NOTHING');
  const {
    result: stored,
    ms,
    cpuMs,
  } = await timed(async () => {
    db.exec('BEGIN IMMEDIATE');
    let inserted = 0;
    for await (const record of fs.createReadStream(file).pipe(parse({ from_line: 2 })) as AsyncIterable<string[]>)
      inserted += insert.run(record).changes;
    db.exec('COMMIT');
    return inserted;
  });
  db.close();
  return { ms, cpuMs, stored };
}

/** At most one round of every site, systematic ropes (every 4th pen): the whole pipeline with outputs. */
const PIPELINE_ROWS = SHAPE.sites * SHAPE.barnsPerSite * Math.ceil((2 * SHAPE.pensPerRow) / 4) * ASSAYS.length;

/** The middle value (the lower of the two middle ones for an even count): always one that was measured. */
function median(values: readonly number[]): number {
  return [...values].sort((a, b) => a - b)[Math.floor((values.length - 1) / 2)]!;
}

function spread(values: readonly number[]): { median: number; min: number; max: number } {
  return { median: median(values), min: Math.min(...values), max: Math.max(...values) };
}

const timing = (report: ChildReport): Timing => ({ wallMs: report.ms, cpuMs: report.cpuMs });

/** The alternating pairs as bench/pairs.ts reports them: medians, and per-pair ratios (ours / floor) with their range. */
function pairedRuns(pairs: readonly { ours: ChildReport; floor: ChildReport }[]): PairedRatio {
  const ours = pairs.map((pair) => timing(pair.ours));
  const floor = pairs.map((pair) => timing(pair.floor));
  return {
    pairs: pairs.length,
    ours: { wallMs: median(ours.map((t) => t.wallMs)), cpuMs: median(ours.map((t) => t.cpuMs)) },
    baseline: { wallMs: median(floor.map((t) => t.wallMs)), cpuMs: median(floor.map((t) => t.cpuMs)) },
    wallRatio: spread(ours.map((t, i) => t.wallMs / floor[i]!.wallMs)),
    cpuRatio: spread(ours.map((t, i) => t.cpuMs / floor[i]!.cpuMs)),
  };
}

const range = (r: { median: number; min: number; max: number }, digits = 2) =>
  `${r.median.toFixed(digits)} (${r.min.toFixed(digits)}-${r.max.toFixed(digits)})`;
const seconds = (ms: number) => `${(ms / 1000).toFixed(1)} s`;

/**
 * Times the ingest code (`ingestFile`, outputs left out) at 100,000 and 2,000,000 rows and,
 * REPEATS times alternating with the keyed floor, at 1,000,000 rows; then the whole pipeline
 * (`processFile`, outputs of every site included) on one round of all 50 sites beside the floor
 * on the same file. Targets: rows/s at least 0.8 of the floor's, CPU at most 1.3 times its CPU,
 * peak RSS at 2M rows within 10% of that at 1M.
 */
export async function benchIngest(): Promise<BenchRow[]> {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-bench-ingest-'));
  try {
    const configDir = path.join(root, 'config');
    writeManySiteConfig(configDir, SHAPE);
    const write = (rows: number, every: number) => {
      const file = path.join(root, `nvdl_bench_${rows}_${every}.csv`);
      const rounds = writeBigExport(file, rows, SHAPE, every);
      process.stderr.write(
        `bench ingest: wrote ${rows} rows (${rounds} rounds x ${SHAPE.sites} sites), ${(fs.statSync(file).size / 1e6).toFixed(1)} MB\n`,
      );
      return file;
    };
    let runs = 0;
    const run = (mode: ChildMode, file: string, rows: number): ChildReport => {
      const dir = path.join(root, `run-${runs++}-${mode}-${rows}`);
      fs.cpSync(configDir, path.join(dir, 'config'), { recursive: true });
      const report = spawnChild(mode, file, dir, rows);
      process.stderr.write(`bench ingest: ${JSON.stringify(report)}\n`);
      fs.rmSync(dir, { recursive: true, force: true });
      return report;
    };
    const rate = (report: ChildReport) => report.stored / (report.ms / 1000);
    const file100k = write(100_000, 1);
    const file1m = write(1_000_000, 1);
    const filePipeline = write(PIPELINE_ROWS, 4);

    const small = run('store', file100k, 100_000);
    // Twice the large file once, for memory: a plateau, not a slope, shows the streaming.
    const file2m = write(2_000_000, 1);
    const double = run('store', file2m, 2_000_000);
    fs.rmSync(file2m, { force: true });
    const pairs: { ours: ChildReport; floor: ChildReport }[] = [];
    for (let repeat = 0; repeat < REPEATS; repeat++) {
      const floor = run('baseline', file1m, 1_000_000);
      const ours = run('store', file1m, 1_000_000);
      pairs.push({ ours, floor });
    }
    const paired = pairedRuns(pairs);
    // rows/s ratio of a pair = floor wall / ours wall (the same rows on both sides).
    const rateRatios = spread(pairs.map((pair) => rate(pair.ours) / rate(pair.floor)));
    const pipeline = run('pipeline', filePipeline, PIPELINE_ROWS);
    const floorPipeline = run('baseline', filePipeline, PIPELINE_ROWS);
    const largePeak = median(pairs.map((pair) => pair.ours.peakRssMb));
    const checksums = [...new Set(pairs.map((pair) => `${pair.ours.stored}/${pair.floor.stored}`))].join(', ');
    return [
      {
        name: `ingest code, 1M rows (ingestFile, outputs left out) vs the keyed floor, median of ${REPEATS} alternating pairs (target >= 0.8)`,
        value: median(pairs.map((pair) => rate(pair.ours))),
        unit: 'rows/s',
        baseline: median(pairs.map((pair) => rate(pair.floor))),
        ratio: rateRatios.median,
        note: `checksum ${checksums} rows stored (ours/floor); rows/s ratio ${range(rateRatios)}; wall ${pairs.map((pair) => `${seconds(pair.ours.ms)} vs ${seconds(pair.floor.ms)}`).join('; ')}`,
      },
      {
        name: `ingest code, 1M rows: CPU time (user + system, both threads) vs the keyed floor, median of ${REPEATS} pairs (target <= 1.3)`,
        value: paired.ours.cpuMs,
        unit: 'ms',
        baseline: paired.baseline.cpuMs,
        ratio: paired.cpuRatio.median,
        note: `CPU ratio ${range(paired.cpuRatio)}; CPU ${pairs.map((pair) => `${seconds(pair.ours.cpuMs)} vs ${seconds(pair.floor.cpuMs)}`).join('; ')}; wall ratio (time) ${range(paired.wallRatio)}`,
      },
      {
        name: 'ingest code, 100k rows',
        value: rate(small),
        unit: 'rows/s',
        note: `checksum ${small.stored}; wall ${seconds(small.ms)}, CPU ${seconds(small.cpuMs)}`,
      },
      {
        name: 'ingest code, 2M rows',
        value: rate(double),
        unit: 'rows/s',
        note: `checksum ${double.stored}; wall ${seconds(double.ms)}, CPU ${seconds(double.cpuMs)}`,
      },
      {
        name: `whole pipeline, ${pipeline.stored} rows (processFile, outputs of ${pipeline.siteRounds} site-rounds) vs the keyed floor`,
        value: rate(pipeline),
        unit: 'rows/s',
        baseline: rate(floorPipeline),
        ratio: rate(pipeline) / rate(floorPipeline),
        note: `checksum ${pipeline.stored}; wall ${seconds(pipeline.ms)} vs ${seconds(floorPipeline.ms)}, CPU ${seconds(pipeline.cpuMs)} vs ${seconds(floorPipeline.cpuMs)}`,
      },
      { name: 'peak RSS, ingest 100k rows', value: small.peakRssMb, unit: 'MB' },
      {
        name: 'peak RSS, ingest 1M rows (median of the runs)',
        value: largePeak,
        unit: 'MB',
        baseline: median(pairs.map((pair) => pair.floor.peakRssMb)),
        ratio: largePeak / median(pairs.map((pair) => pair.floor.peakRssMb)),
        note: `baseline here: the keyed floor at 1M rows. Runs: ${pairs.map((pair) => pair.ours.peakRssMb.toFixed(0)).join(', ')} MB (floor ${pairs.map((pair) => pair.floor.peakRssMb.toFixed(0)).join(', ')} MB)`,
      },
      {
        name: 'peak RSS, ingest 2M rows vs 1M rows (target: ratio <= 1.1)',
        value: double.peakRssMb,
        unit: 'MB',
        baseline: largePeak,
        ratio: double.peakRssMb / largePeak,
        note: `baseline here: the 1M-row runs (median); a ratio near 1 means memory stays flat as the file grows; checksum ${double.stored} rows stored in ${seconds(double.ms)}`,
      },
    ];
  } finally {
    fs.rmSync(root, { recursive: true, force: true });
  }
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/'));
if (invokedDirectly) {
  const [flag, mode, file, dir, rows] = process.argv.slice(2);
  if (flag === '--child') await runChild(mode as ChildMode, file!, dir!, Number(rows));
  else process.stdout.write(`${JSON.stringify(await benchIngest(), null, 2)}\n`);
}
