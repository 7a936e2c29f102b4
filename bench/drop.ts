/**
 * One lab export dropped through the whole pipeline (`processFile`: ingest, commit, outputs) in a
 * child process of its own running the compiled program (bench/dropChild.mjs imports dist/, as
 * the installed `ropewatch` runs), on a fresh copy of a prepared workspace. The whole process is
 * measured from outside (CPU of all its threads and peak resident memory, read as it exits:
 * bench/childProcess.ts), and `processFile` alone from inside; the files and bytes the drop wrote
 * are counted afterwards. Needs dist/ built from the current sources (`npm run bench` builds it).
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { compiledBin } from '../test/helpers/compiledCli.js';
import { lastJsonLine, runChild } from './childProcess.js';
import type { Timing } from './pairs.js';
import { type OutboxFigures, outboxFigures, workspacePaths } from './workspaces.js';

const REPO = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const CHILD = path.join(REPO, 'bench', 'dropChild.mjs');
export const DROP_NOW = new Date('2032-12-01T12:00:00Z');

/** Timing is processFile's own; `process` is the whole child process's. */
export interface DropReport extends Timing, OutboxFigures {
  rounds: number;
  /** The whole child process: start-up, loading the program, the drop, closing the store. */
  process: Timing;
  peakRssMb: number;
}

/** A prepared workspace and the export of its next round. */
export interface Prepared {
  dir: string;
  drop: string;
}

/** Refuses to time a program missing or older than its sources: the child runs dist/. */
export function checkBuilt(): void {
  compiledBin();
}

/** Drops `prepared.drop` into a fresh copy of `prepared.dir` at `runDir`, in a child process. */
export async function spawnDrop(
  prepared: Prepared,
  rounds: number,
  runDir: string,
  hook: string,
  label: string,
): Promise<DropReport> {
  fs.rmSync(runDir, { recursive: true, force: true });
  fs.cpSync(prepared.dir, runDir, { recursive: true });
  const run = await runChild([CHILD, runDir, prepared.drop, DROP_NOW.toISOString()], { hook, cwd: REPO });
  const inside = lastJsonLine<Timing & { startedAt: number }>(run, `bench ${label} drop`);
  const report: DropReport = {
    rounds,
    wallMs: inside.wallMs,
    cpuMs: inside.cpuMs,
    process: { wallMs: run.wallMs, cpuMs: run.cpuMs },
    ...outboxFigures(workspacePaths(runDir).outbox, inside.startedAt),
    peakRssMb: run.peakRssMb,
  };
  fs.rmSync(runDir, { recursive: true, force: true });
  process.stderr.write(
    `bench ${label}: drop at ${rounds} rounds: process ${report.process.cpuMs.toFixed(0)} ms CPU, ${report.process.wallMs.toFixed(0)} ms wall (processFile ${report.cpuMs.toFixed(0)} ms CPU, ${report.wallMs.toFixed(0)} ms wall), ${report.filesWritten} files ${(report.bytesWritten / 1e6).toFixed(1)} MB written, peak RSS ${report.peakRssMb.toFixed(0)} MB\n`,
  );
  return report;
}
