/**
 * One lab export dropped through the whole pipeline (`processFile`: ingest, commit, outputs) in a
 * child process of its own, on a fresh copy of a prepared workspace: the child times
 * `processFile` (CPU: process.cpuUsage, user + system of every thread; wall) and counts the files
 * and bytes the drop wrote; its peak resident memory (VmHWM) is read as it exits.
 *
 *   node --import tsx bench/drop.ts <workspace> <export> <rounds>     (child side only)
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { processFile } from '../src/pipeline.js';
import { lastJsonLine, ownPeakRssMb, runChild } from './childProcess.js';
import type { Timing } from './pairs.js';
import { openBenchWorkspace, type OutboxFigures, outboxFigures, workspacePaths } from './workspaces.js';

const REPO = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
export const DROP_NOW = new Date('2032-12-01T12:00:00Z');

export interface DropReport extends Timing, OutboxFigures {
  rounds: number;
  /** CPU of the whole child process (start-up, TypeScript loading and all). */
  processCpuMs: number;
  peakRssMb: number;
}

/** A prepared workspace and the export of its next round. */
export interface Prepared {
  dir: string;
  drop: string;
}

async function runDrop(dir: string, file: string, rounds: number): Promise<void> {
  const target = path.join(workspacePaths(dir).inbox, path.basename(file));
  fs.copyFileSync(file, target);
  const ws = openBenchWorkspace(dir, DROP_NOW);
  const startedAt = Date.now();
  const cpu0 = process.cpuUsage();
  const t0 = performance.now();
  const { receipt } = await processFile(ws, target);
  const wallMs = performance.now() - t0;
  const cpu = process.cpuUsage(cpu0);
  ws.close();
  if (receipt.status !== 'accepted') throw new Error(`drop refused: ${JSON.stringify(receipt.reason)}`);
  const total = process.cpuUsage();
  const report: DropReport = {
    rounds,
    wallMs,
    cpuMs: (cpu.user + cpu.system) / 1000,
    processCpuMs: (total.user + total.system) / 1000,
    ...outboxFigures(workspacePaths(dir).outbox, startedAt),
    peakRssMb: ownPeakRssMb(),
  };
  process.stdout.write(`${JSON.stringify(report)}\n`);
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
  const run = await runChild(
    ['--import', 'tsx', fileURLToPath(import.meta.url), runDir, prepared.drop, String(rounds)],
    { hook, cwd: REPO },
  );
  fs.rmSync(runDir, { recursive: true, force: true });
  const report = lastJsonLine<DropReport>(run, `bench ${label} drop`);
  report.peakRssMb = Math.max(report.peakRssMb, run.peakRssMb);
  process.stderr.write(
    `bench ${label}: drop at ${rounds} rounds: ${report.wallMs.toFixed(0)} ms wall, ${report.cpuMs.toFixed(0)} ms CPU (process ${report.processCpuMs.toFixed(0)} ms CPU, ${run.wallMs.toFixed(0)} ms wall), ${report.filesWritten} files ${(report.bytesWritten / 1e6).toFixed(1)} MB written, peak RSS ${report.peakRssMb.toFixed(0)} MB\n`,
  );
  return report;
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/'));
if (invokedDirectly) {
  const [dir, file, rounds] = process.argv.slice(2);
  await runDrop(dir!, file!, Number(rounds));
}
