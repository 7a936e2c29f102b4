/**
 * Memory of `ropewatch report` on a program of 50 sites with a long history: the compiled CLI
 * (dist/cli/bin.js, as installed; `npm run build` first) in a child process with a 512 MB heap
 * (`node --max-old-space-size=512`), rebuilding every site's outputs from a store whose outputs
 * were never built (the most a report does). Prints its peak resident memory (VmHWM, proc(5), read
 * by the child as it exits and polled while it runs) against the 500 MiB target, and whether it
 * completed with that heap; its wall and CPU time beside them.
 *
 * 50 sites x 40 rounds (2,000 site-rounds): a full report of 150 rounds (7,500 site-rounds) took
 * over 12 minutes of CPU when this was written, too long for a bench meant to run in about 30
 * minutes; if memory is bounded by one site, as it should be, 40 rounds of 50 sites already show
 * whether it grows with the store. Pass a longer history as the first argument to see.
 *
 *   npx tsx bench/memory.ts [rounds] [sites]     (or: npm run bench -- memory)
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { generatedSite } from '../test/helpers/hardening.js';
import { compiledBin, REPO_ROOT } from '../test/helpers/compiledCli.js';
import { runChild, terminalProgress, writeHook } from './childProcess.js';
import { DROP_NOW } from './drop.js';
import { below, TARGETS } from './targets.js';
import type { BenchRow, PartOptions } from './types.js';
import { reportArgs, sitesWritten, siteProgressText, storeRounds, workspacePaths } from './workspaces.js';

const HEAP_MB = 512;

/** `report` on `sites` x `rounds` (50 x 40; 5 x 10 with `small`) with a 512 MB heap. */
export async function benchMemory(
  options: PartOptions = { small: false },
  rounds = options.small ? 10 : 40,
  sites = options.small ? 5 : 50,
): Promise<BenchRow[]> {
  const bin = compiledBin();
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-bench-memory-'));
  try {
    const dir = path.join(root, 'workspace');
    const stored = await storeRounds(dir, sites, rounds, DROP_NOW);
    const paths = workspacePaths(dir);
    const siteIds = Array.from({ length: sites }, (_, i) => generatedSite(i).id);
    const progress = terminalProgress('bench memory');
    const run = await runChild(reportArgs(bin, paths), {
      hook: writeHook(root),
      cwd: REPO_ROOT,
      nodeOptions: [`--max-old-space-size=${HEAP_MB}`],
      tickMs: 1000,
      onTick: progress ? (ms) => progress.show(siteProgressText(paths.outbox, siteIds, ms)) : undefined,
    });
    progress?.done();
    const completed = run.status === 0;
    const written = sitesWritten(paths.outbox, siteIds);
    process.stderr.write(
      `bench memory: report on ${sites} sites x ${rounds} rounds: exit ${run.status ?? run.signal}, peak RSS ${run.peakRssMb.toFixed(0)} MB, ${(run.wallMs / 1000).toFixed(1)} s wall, ${(run.cpuMs / 1000).toFixed(1)} s CPU\n`,
    );
    if (!completed) process.stderr.write(`bench memory: report's stderr: ${run.stderr.slice(-2000)}\n`);
    const what = `ropewatch report, ${sites} sites x ${rounds} rounds (${stored} rows), --max-old-space-size=${HEAP_MB}`;
    return [
      {
        name: `${what}: peak RSS`,
        value: run.peakRssMb,
        unit: 'MiB',
        figures: { wallMs: run.wallMs, cpuMs: run.cpuMs, exitCode: run.status ?? -1, sitesWritten: written },
        note: `VmHWM ${run.reported ? 'read by the child as it exited' : 'polled while it ran (it did not reach its exit handler)'}`,
        target: below(run.peakRssMb, TARGETS.peakRssMiB, `< ${TARGETS.peakRssMiB} MiB`),
      },
      {
        name: `${what}: completed`,
        value: run.wallMs / 1000,
        unit: 's wall',
        note: `exit ${run.status ?? run.signal}; CPU ${(run.cpuMs / 1000).toFixed(1)} s; outputs of ${written} of ${sites} sites written${completed ? '' : `; stderr: ${run.stderr.slice(-300).replace(/\s+/g, ' ')}`}`,
        target: { text: `completes with a ${HEAP_MB} MB heap`, met: completed && written === sites },
      },
    ];
  } finally {
    fs.rmSync(root, { recursive: true, force: true });
  }
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/'));
if (invokedDirectly) {
  const [rounds, sites] = process.argv.slice(2);
  process.stdout.write(
    `${JSON.stringify(await benchMemory({ small: false }, rounds ? Number(rounds) : undefined, sites ? Number(sites) : undefined), null, 2)}\n`,
  );
}
