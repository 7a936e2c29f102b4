/**
 * Start-up of the command line: `ropewatch --help` from the compiled program (the package's bin,
 * dist/cli/bin.js), and from the TypeScript sources through tsx for comparison, against a bare
 * `node -e 0` in the same run, run in turn (node -e 0, compiled, sources, node -e 0, ...) so a load
 * on the machine falls on all three. Wall time is measured around each child; CPU time is the
 * child's own (user + system, read in its exit handler by a module loaded with --import into the
 * baseline and the measured runs alike: bench/childProcess.ts). Each ratio is the median of the
 * per-turn ratios to the `node -e 0` of the same turn, with its range, in CPU and in wall time.
 *
 *   npm run bench -- cli         (needs dist/: npm run build)
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { compiledBin, REPO_ROOT } from '../test/helpers/compiledCli.js';
import { runChildSync, writeHook } from './childProcess.js';
import { describePair, summarisePairs, type Timing } from './pairs.js';
import type { BenchRow, PartOptions } from './types.js';

function once(args: readonly string[], hook: string): Timing {
  const run = runChildSync(args, { hook, cwd: REPO_ROOT });
  if (run.status !== 0) throw new Error(`node ${args.join(' ')} exited ${run.status ?? run.signal}: ${run.stderr}`);
  if (!run.reported) throw new Error(`node ${args.join(' ')} did not report its CPU time`);
  return { wallMs: run.wallMs, cpuMs: run.cpuMs };
}

export async function benchCli(options: PartOptions = { small: false }): Promise<BenchRow[]> {
  const turns = options.small ? 5 : 15;
  const bin = compiledBin();
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-bench-cli-'));
  const hook = writeHook(dir);
  const commands = {
    baseline: ['-e', '0'],
    compiled: [bin, '--help'],
    sources: ['--import', 'tsx', path.join(REPO_ROOT, 'src', 'cli', 'bin.ts'), '--help'],
  };
  const samples: Record<keyof typeof commands, Timing[]> = { baseline: [], compiled: [], sources: [] };
  try {
    // One warm-up each (file system cache), then the three in turn.
    for (const args of Object.values(commands)) once(args, hook);
    for (let turn = 0; turn < turns; turn++) {
      for (const [name, args] of Object.entries(commands) as [keyof typeof commands, string[]][])
        samples[name].push(once(args, hook));
    }
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
  return (
    [
      ['compiled', '--help, compiled (bin)'],
      ['sources', '--help, TypeScript via tsx'],
    ] as const
  ).map(([name, label]) => {
    const paired = summarisePairs(samples[name], samples.baseline);
    return {
      name: label,
      value: paired.ours.cpuMs,
      unit: 'CPU ms',
      baseline: paired.baseline.cpuMs,
      ratio: paired.cpuRatio.median,
      paired,
      note: `baseline node -e 0; ${describePair(paired)}`,
    };
  });
}
