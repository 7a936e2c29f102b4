/**
 * Child side of bench/drop.ts: one lab export dropped through the compiled program (dist/, as
 * `ropewatch ingest` and `watch` run it) into the workspace at <dir>, its clock at <now>. Prints
 * processFile's own wall and CPU time (process.cpuUsage: user + system of every thread) and the
 * moment it started; the parent measures the whole process from outside.
 *
 *   node bench/dropChild.mjs <workspace> <export> <now as ISO time>
 */
import fs from 'node:fs';
import path from 'node:path';
import { processFile } from '../dist/pipeline.js';
import { openWorkspace } from '../dist/workspace.js';

const [dir, file, nowIso] = process.argv.slice(2);
const now = new Date(nowIso);
const target = path.join(dir, 'inbox', path.basename(file));
fs.copyFileSync(file, target);
const ws = openWorkspace(
  {
    configDir: path.join(dir, 'config'),
    storeLocation: { kind: 'sqlite', file: path.join(dir, 'store.db') },
    inbox: path.join(dir, 'inbox'),
    outbox: path.join(dir, 'outbox'),
  },
  () => now,
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
process.stdout.write(`${JSON.stringify({ wallMs, cpuMs: (cpu.user + cpu.system) / 1000, startedAt })}\n`);
