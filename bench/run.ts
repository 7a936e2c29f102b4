/**
 * `npm run bench [-- [--small] part ...]`: every benchmark part, each beside a baseline measured in
 * the same run on the same inputs, as alternating pairs with CPU time beside wall time. Prints a
 * table (each ratio as median and range, each target and whether it is met) and writes
 * bench/results/<date>.json and latest.json so runs can be compared. Absolute times on shared
 * machines are noise: read the CPU ratios, and the calibration beside an absolute target.
 *
 * Parts: stats, spatial, ingest, pg, recompute, cli, history, weekly, memory. `--small` runs each at a
 * size that proves it works, not at the sizes the targets name.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { ratioText } from './pairs.js';
import { withDefaultTarget } from './targets.js';
import type { BenchRow, PartOptions } from './types.js';

type Part = { name: string; run: (options: PartOptions) => Promise<BenchRow[]> };

/** Name, module, export; the ingest part runs at its own sizes (it takes no options). */
const PARTS = [
  ['stats', './stats.js', 'benchStats'],
  ['spatial', './spatial.js', 'benchSpatial'],
  ['ingest', './ingest.js', 'benchIngest'],
  ['pg', './pgIngest.js', 'benchPgIngest'],
  ['recompute', './recompute.js', 'benchRecompute'],
  ['cli', './cli.js', 'benchCli'],
  ['history', './history.js', 'benchHistory'],
  ['weekly', './weekly.js', 'benchWeekly'],
  ['memory', './memory.js', 'benchMemory'],
] as const;
const WITHOUT_OPTIONS: readonly string[] = ['ingest'];

function loadParts(only: readonly string[]): Part[] {
  const unknown = only.filter((name) => !PARTS.some(([part]) => part === name));
  if (unknown.length > 0)
    throw new Error(`unknown bench part ${unknown.join(', ')}; parts: ${PARTS.map(([part]) => part).join(', ')}`);
  return PARTS.filter(([name]) => only.length === 0 || only.includes(name)).map(([name, module, exported]) => ({
    name,
    run: async (options) => {
      const run = ((await import(module)) as Record<string, (options?: PartOptions) => Promise<BenchRow[]>>)[exported]!;
      return WITHOUT_OPTIONS.includes(name) ? run() : run(options);
    },
  }));
}

function formatNumber(value: number | undefined): string {
  if (value === undefined) return '';
  if (Math.abs(value) >= 1000) return value.toFixed(0);
  if (Math.abs(value) >= 1) return value.toFixed(2);
  return value.toPrecision(3);
}

const HEADER = [
  'part | measure | value | unit | baseline | CPU ratio (range) | wall ratio (range) | target | met',
  '---|---|---|---|---|---|---|---|---',
];

function tableLine(part: string, row: BenchRow): string {
  const cpu = row.paired ? ratioText(row.paired.cpuRatio) : formatNumber(row.ratio);
  const wall = row.paired ? ratioText(row.paired.wallRatio) : '';
  const met = row.target === undefined ? '' : row.target.met ? 'yes' : 'NO';
  return `${part} | ${row.name} | ${formatNumber(row.value)} | ${row.unit} | ${formatNumber(row.baseline)} | ${cpu} | ${wall} | ${row.target?.text ?? ''} | ${met}`;
}

async function main(): Promise<void> {
  const args = process.argv.slice(2);
  const options: PartOptions = { small: args.includes('--small') };
  const only = args.filter((arg) => arg !== '--small');
  const started = new Date();
  const loadAtStart = os.loadavg();
  const results: { part: string; rows: BenchRow[]; error?: string }[] = [];
  // A part that fails is reported and the others still run: a long run is not lost to one error.
  for (const part of loadParts(only)) {
    process.stderr.write(`bench: ${part.name}...\n`);
    try {
      const rows = (await part.run(options)).map((row) => withDefaultTarget(part.name, row));
      results.push({ part: part.name, rows });
    } catch (error) {
      const message = error instanceof Error ? error.message : String(error);
      process.stderr.write(`bench: ${part.name} failed: ${message}\n`);
      results.push({ part: part.name, rows: [], error: message });
    }
  }
  const lines = [...HEADER];
  for (const { part, rows, error } of results) {
    for (const row of rows) lines.push(tableLine(part, row));
    if (error !== undefined) lines.push(`${part} | FAILED: ${error.split('\n')[0]} | | | | | | |`);
  }
  const missed = results.flatMap(({ part, rows }) =>
    rows.filter((row) => row.target?.met === false).map((row) => `${part}: ${row.name}`),
  );
  const held = results.reduce((sum, { rows }) => sum + rows.filter((row) => row.target !== undefined).length, 0);
  lines.push(
    '',
    held === 0
      ? 'no product target in these parts'
      : missed.length === 0
        ? `${held === 1 ? 'the one target' : `all ${held} targets`} met`
        : `${missed.length} of ${held} targets not met:\n  ${missed.join('\n  ')}`,
  );
  const failed = results.filter((result) => result.error !== undefined).map((result) => result.part);
  if (failed.length > 0) lines.push(`parts that failed: ${failed.join(', ')}`);
  process.stdout.write(`${lines.join('\n')}\n`);
  const report = {
    startedAt: started.toISOString(),
    node: process.version,
    cpus: os.cpus().length,
    cpuModel: os.cpus()[0]?.model ?? 'unknown',
    /** 1, 5 and 15-minute load averages at the start and at the end of the run (2 cores: above 2, busy). */
    loadAverage: { start: loadAtStart, end: os.loadavg() },
    small: options.small,
    results,
  };
  const dir = path.join(path.dirname(fileURLToPath(import.meta.url)), 'results');
  fs.mkdirSync(dir, { recursive: true });
  const body = `${JSON.stringify(report, null, 2)}\n`;
  fs.writeFileSync(path.join(dir, `${started.toISOString().replace(/[:.]/g, '-')}.json`), body);
  fs.writeFileSync(path.join(dir, 'latest.json'), body);
  process.stderr.write(`bench: wrote ${path.join(dir, 'latest.json')}\n`);
  if (failed.length > 0) process.exitCode = 1;
}

await main();
