/**
 * Start-up of the command line: `ropewatch --help` from the compiled program (the package's bin,
 * dist/cli/bin.js), and from the TypeScript sources through tsx for comparison, against a bare
 * `node -e 0` in the same run, runs interleaved. Wall time is measured around each child; CPU
 * time is the child's own (user + system, process.cpuUsage() read in its 'exit' handler, loaded
 * with --import into the baseline and the measured runs alike).
 *
 *   npm run bench -- cli         (needs dist/: npm run build)
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { compiledBin, REPO_ROOT } from '../test/helpers/compiledCli.js';
import type { BenchRow } from './types.js';

const RUNS = 15;
const CPU_MARK = 'ropewatch-bench-cpu ';

/** Prints the process's CPU time (µs) as the last line of stderr when it exits. */
const CPU_HOOK = `process.on('exit', () => { const u = process.cpuUsage(); process.stderr.write('\\n${CPU_MARK}' + (u.user + u.system) + '\\n'); });\n`;

interface Sample {
  wallMs: number;
  cpuMs: number;
}

function once(args: readonly string[], hook: string): Sample {
  const started = process.hrtime.bigint();
  const child = spawnSync(process.execPath, ['--import', hook, ...args], { cwd: REPO_ROOT, encoding: 'utf8' });
  const wallMs = Number(process.hrtime.bigint() - started) / 1e6;
  if (child.status !== 0) throw new Error(`node ${args.join(' ')} exited ${child.status}: ${child.stderr}`);
  const mark = child.stderr.lastIndexOf(CPU_MARK);
  if (mark < 0) throw new Error(`node ${args.join(' ')} did not report its CPU time`);
  return { wallMs, cpuMs: Number(child.stderr.slice(mark + CPU_MARK.length).trim()) / 1000 };
}

function median(values: readonly number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  const middle = Math.floor(sorted.length / 2);
  return sorted.length % 2 === 1 ? sorted[middle]! : (sorted[middle - 1]! + sorted[middle]!) / 2;
}

export async function benchCli(): Promise<BenchRow[]> {
  const bin = compiledBin();
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-bench-cli-'));
  const hook = path.join(dir, 'cpu-hook.mjs');
  fs.writeFileSync(hook, CPU_HOOK);
  const commands = {
    baseline: ['-e', '0'],
    compiled: [bin, '--help'],
    sources: ['--import', 'tsx', path.join(REPO_ROOT, 'src', 'cli', 'bin.ts'), '--help'],
  };
  const samples: Record<keyof typeof commands, Sample[]> = { baseline: [], compiled: [], sources: [] };
  try {
    // One warm-up each (file system cache), then the three interleaved, so load on the machine
    // falls on all of them alike.
    for (const args of Object.values(commands)) once(args, hook);
    for (let run = 0; run < RUNS; run++) {
      for (const [name, args] of Object.entries(commands) as [keyof typeof commands, string[]][])
        samples[name].push(once(args, hook));
    }
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
  const rows: BenchRow[] = [];
  for (const measure of ['wallMs', 'cpuMs'] as const) {
    const baseline = median(samples.baseline.map((sample) => sample[measure]));
    for (const [name, label] of [
      ['compiled', '--help, compiled (bin)'],
      ['sources', '--help, TypeScript via tsx'],
    ] as const) {
      const value = median(samples[name].map((sample) => sample[measure]));
      rows.push({
        name: `${label}, ${measure === 'wallMs' ? 'wall' : 'CPU'}`,
        value,
        unit: 'ms',
        baseline,
        ratio: value / baseline,
        note: `median of ${RUNS}; baseline node -e 0`,
      });
    }
  }
  return rows;
}
