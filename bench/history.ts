/**
 * History-growth benchmark: what one more lab export costs as a site's history grows. A site of
 * 4 barns x 50 pens (a rope in every 4th pen, two assays) is stored with 5, 40 and 150 rounds and
 * its outputs built (the steady state of a running clinic); then one export of the next round is
 * dropped through the whole pipeline (`processFile`: ingest, commit, outputs; bench/drop.ts). The
 * drop and the history's last round carry the same pens and positives at every length
 * (bench/workspaces.ts dropPatternShift): a drop reviews those two rounds again, and their
 * findings, not the history, would otherwise set much of the difference. Each drop runs in a child process of its own on a fresh copy of the prepared workspace, the sizes
 * alternating (5, 40, 150, 5, 40, 150, ...), so a load on the machine falls on all of them; each
 * reports its CPU time beside its wall time, the files and bytes it wrote and its peak RSS.
 * Ratios are per pair against the 5-round drop of the same pair: median and range of CPU and of
 * wall. The analysis runs with the program's defaults (999 permutations, 2,000 simulated
 * outbreaks). Target: the longest history's drop at most 1.3x the CPU of the 5-round drop, the
 * whole process of the compiled program measured (as `ropewatch ingest` runs); processFile alone
 * (no start-up, no loading) is shown beside it.
 *
 *   npx tsx bench/history.ts [pairs] [sites]     (or: npm run bench -- history)
 *
 * bench/weekly.ts runs the same measurement for a program of 50 sites (`benchDrops`).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { regenerateOutputs } from '../src/outputs.js';
import { writeHook } from './childProcess.js';
import { checkBuilt, DROP_NOW, type DropReport, type Prepared, spawnDrop } from './drop.js';
import { describePair, summarisePairs } from './pairs.js';
import { atMost, below, TARGETS } from './targets.js';
import type { BenchRow, PartOptions } from './types.js';
import { dropPatternShift, openBenchWorkspace, storeRounds, writeRoundExport } from './workspaces.js';

const HISTORIES = [5, 40, 150] as const;

/** A workspace holding `rounds` rounds of every site with its outputs built, and the next round's export. */
export async function prepare(root: string, sites: number, rounds: number): Promise<Prepared> {
  const dir = path.join(root, `history-${rounds}`);
  // The same last round and the same drop after every history length (dropPatternShift).
  const shift = dropPatternShift(rounds);
  await storeRounds(dir, sites, rounds, DROP_NOW, shift);
  const drop = path.join(root, `nvdl_round_${rounds + 1}.csv`);
  writeRoundExport(drop, sites, rounds, shift);
  const ws = openBenchWorkspace(dir, DROP_NOW);
  try {
    const started = performance.now();
    regenerateOutputs(ws);
    process.stderr.write(
      `bench: ${rounds} rounds x ${sites} sites stored, outputs built in ${((performance.now() - started) / 1000).toFixed(1)} s\n`,
    );
  } finally {
    ws.close();
  }
  return { dir, drop };
}

export interface DropSeries {
  /** e.g. 'history' or 'weekly': names the temporary folder and the progress lines. */
  label: string;
  /** What the export carries, for the row names: 'one site', '50 sites'. */
  what: string;
  sites: number;
  /** History sizes; the first is the baseline of the ratios. */
  histories: readonly number[];
  pairs: number;
}

/**
 * Prepares a workspace per history size, then drops the next round's export at each size in turn,
 * `pairs` times; one row per size with the CPU and wall ratios to the first size's drop of the same
 * pair, files and bytes written and peak RSS, each longer history held against the 1.3x target;
 * then the peak RSS of the longest history's drop against the 500 MiB target.
 */
export async function benchDrops(series: DropSeries): Promise<BenchRow[]> {
  checkBuilt();
  const root = fs.mkdtempSync(path.join(os.tmpdir(), `ropewatch-bench-${series.label}-`));
  try {
    const hook = writeHook(root);
    const prepared = new Map<number, Prepared>();
    for (const rounds of series.histories) prepared.set(rounds, await prepare(root, series.sites, rounds));
    const runs = new Map<number, DropReport[]>(series.histories.map((rounds) => [rounds, []]));
    for (let pair = 0; pair < series.pairs; pair++)
      for (const rounds of series.histories)
        runs
          .get(rounds)!
          .push(await spawnDrop(prepared.get(rounds)!, rounds, path.join(root, 'run'), hook, series.label));
    const [first] = series.histories;
    const base = runs.get(first!)!;
    const longest = Math.max(...series.histories);
    const rows = series.histories.flatMap((rounds): BenchRow[] => {
      const these = runs.get(rounds)!;
      // The target is for the whole process, as a user's `ropewatch ingest` runs; processFile
      // alone (no start-up, no loading of the program) is shown beside it.
      const whole = summarisePairs(
        these.map((r) => r.process),
        base.map((r) => r.process),
      );
      const inside = summarisePairs(these, base);
      const peak = Math.max(...these.map((r) => r.peakRssMb));
      const last = these.at(-1)!;
      const written = `wrote ${last.filesWritten} files, ${(last.bytesWritten / 1e6).toFixed(1)} MB (outbox ${last.outboxFiles} files, ${(last.outboxBytes / 1e6).toFixed(1)} MB); peak RSS ${peak.toFixed(0)} MB`;
      const figures: Record<string, number> = {
        filesWritten: last.filesWritten,
        bytesWritten: last.bytesWritten,
        outboxFiles: last.outboxFiles,
        outboxBytes: last.outboxBytes,
        peakRssMiB: peak,
      };
      const name = `${series.label}: drop one export (next round, ${series.what}) at ${rounds} rounds of history`;
      if (rounds === first)
        // The baseline itself: its own figures, no ratio to itself.
        return [
          {
            name: `${name}, whole process`,
            value: whole.ours.cpuMs,
            unit: 'CPU ms',
            figures: { ...figures, processFileCpuMs: inside.ours.cpuMs },
            note: `median of ${these.length} runs, wall ${whole.ours.wallMs.toFixed(0)} ms; processFile alone ${inside.ours.cpuMs.toFixed(0)} ms CPU, ${inside.ours.wallMs.toFixed(0)} ms wall; ${written}`,
          } satisfies BenchRow,
        ];
      return [
        {
          name: `${name}, whole process`,
          value: whole.ours.cpuMs,
          unit: 'CPU ms',
          baseline: whole.baseline.cpuMs,
          ratio: whole.cpuRatio.median,
          paired: whole,
          figures,
          note: `against the ${first}-round drop of the same pair: ${describePair(whole)}; ${written}`,
          target: atMost(
            whole.cpuRatio.median,
            TARGETS.historyDropRatio,
            `<= ${TARGETS.historyDropRatio}x the CPU of the ${first}-round drop (whole process)`,
          ),
        } satisfies BenchRow,
        {
          name: `${name}, processFile alone`,
          value: inside.ours.cpuMs,
          unit: 'CPU ms',
          baseline: inside.baseline.cpuMs,
          ratio: inside.cpuRatio.median,
          paired: inside,
          note: `no process start-up or program loading; against the ${first}-round drop of the same pair: ${describePair(inside)}`,
        } satisfies BenchRow,
      ];
    });
    const peak = Math.max(...runs.get(longest)!.map((r) => r.peakRssMb));
    rows.push({
      name: `${series.label}: peak RSS of the drop (${series.what}) at ${longest} rounds of history`,
      value: peak,
      unit: 'MiB',
      baseline: Math.max(...base.map((r) => r.peakRssMb)),
      ratio: peak / Math.max(...base.map((r) => r.peakRssMb)),
      note: `VmHWM of the drop's child process, the highest of its ${series.pairs} runs; baseline: the ${first}-round drop`,
      target: below(peak, TARGETS.peakRssMiB, `< ${TARGETS.peakRssMiB} MiB`),
    });
    return rows;
  } finally {
    fs.rmSync(root, { recursive: true, force: true });
  }
}

/** One site at 5, 40 and 150 rounds (5 and 20 with `small`), `pairs` alternating runs (five by default: single pairs swing by a third on a shared 2-core machine). */
export function benchHistory(options: PartOptions = { small: false }, pairs = 5, sites = 1): Promise<BenchRow[]> {
  return benchDrops({
    label: 'history',
    what: sites === 1 ? 'one site' : `${sites} sites`,
    sites,
    histories: options.small ? [5, 20] : HISTORIES,
    pairs: options.small ? 2 : pairs,
  });
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/'));
if (invokedDirectly) {
  const [pairs, sites] = process.argv.slice(2);
  process.stdout.write(
    `${JSON.stringify(await benchHistory({ small: false }, pairs ? Number(pairs) : undefined, sites ? Number(sites) : undefined), null, 2)}\n`,
  );
}
