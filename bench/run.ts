/**
 * `npm run bench`: every benchmark part, each beside a baseline measured in the same run on the
 * same inputs. Prints a table and writes bench/results/<date>.json and latest.json so runs can be
 * compared. Absolute times on shared machines are noise: read the ratios.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { BenchRow } from './types.js';

type Part = { name: string; run: () => Promise<BenchRow[]> };

async function loadParts(only: readonly string[]): Promise<Part[]> {
  const parts: Part[] = [
    { name: 'stats', run: async () => (await import('./stats.js')).benchStats() },
    { name: 'spatial', run: async () => (await import('./spatial.js')).benchSpatial() },
  ];
  const extra = [
    ['ingest', './ingest.js', 'benchIngest'],
    ['recompute', './recompute.js', 'benchRecompute'],
    ['cli', './cli.js', 'benchCli'],
    ['history', './history.js', 'benchHistory'],
  ] as const;
  const here = path.dirname(fileURLToPath(import.meta.url));
  for (const [name, module, exported] of extra) {
    if (fs.existsSync(path.join(here, module.replace('.js', '.ts')))) {
      parts.push({
        name,
        run: async () => ((await import(module)) as Record<string, () => Promise<BenchRow[]>>)[exported]!(),
      });
    }
  }
  return only.length === 0 ? parts : parts.filter((part) => only.includes(part.name));
}

function formatNumber(value: number | undefined): string {
  if (value === undefined) return '';
  if (Math.abs(value) >= 1000) return value.toFixed(0);
  if (Math.abs(value) >= 1) return value.toFixed(2);
  return value.toPrecision(3);
}

async function main(): Promise<void> {
  const only = process.argv.slice(2);
  const started = new Date();
  const results: { part: string; rows: BenchRow[] }[] = [];
  for (const part of await loadParts(only)) {
    process.stderr.write(`bench: ${part.name}...\n`);
    results.push({ part: part.name, rows: await part.run() });
  }
  const lines = ['part       | measure | value | unit | baseline | ratio', '---|---|---|---|---|---'];
  for (const { part, rows } of results) {
    for (const row of rows)
      lines.push(
        `${part} | ${row.name} | ${formatNumber(row.value)} | ${row.unit} | ${formatNumber(row.baseline)} | ${formatNumber(row.ratio)}`,
      );
  }
  process.stdout.write(lines.join('\n') + '\n');
  const report = {
    startedAt: started.toISOString(),
    node: process.version,
    cpus: os.cpus().length,
    cpuModel: os.cpus()[0]?.model ?? 'unknown',
    results,
  };
  const dir = path.join(path.dirname(fileURLToPath(import.meta.url)), 'results');
  fs.mkdirSync(dir, { recursive: true });
  const body = JSON.stringify(report, null, 2) + '\n';
  fs.writeFileSync(path.join(dir, `${started.toISOString().replace(/[:.]/g, '-')}.json`), body);
  fs.writeFileSync(path.join(dir, 'latest.json'), body);
  process.stderr.write(`bench: wrote ${path.join(dir, 'latest.json')}\n`);
}

await main();
