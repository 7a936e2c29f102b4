/**
 * `ropewatch demo`: writes the invented scenario's configuration into config/, drops its files
 * into inbox/ one by one on the scenario's clock, and runs each through the same pipeline a real
 * drop takes. Processed files end in inbox/archive/, the refused one in inbox/rejected/, outputs
 * in outbox/. Running it twice gives the same outputs: it starts from an empty store each time.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { UsageError, type CliIo } from '../cli/io.js';
import { loadConfig } from '../config/load.js';
import { regenerateOutputs } from '../outputs.js';
import { processFile } from '../pipeline.js';
import { Store } from '../store/store.js';
import { openWorkspace, type WorkspacePaths } from '../workspace.js';
import { DEMO_TODAY, HOLLOW_CREEK_ROUNDS, hollowCreekRound, tamsinRidgeRound, TAMSIN_RIDGE_ROUNDS, type DemoDrop, type RopeChoice } from './scenario.js';

export const DEMO_CONFIG_DIR = path.join(path.dirname(fileURLToPath(import.meta.url)), 'config');
const DEMO_MARKER = 'demo-store';


function emptyDir(dir: string, keep: readonly string[] = ['.gitkeep']): void {
  fs.mkdirSync(dir, { recursive: true });
  for (const entry of fs.readdirSync(dir)) if (!keep.includes(entry)) fs.rmSync(path.join(dir, entry), { recursive: true, force: true });
}

/** Refuses to wipe a store that holds real data: only a store the demo made may be reset. */
function guardStore(dbFile: string, force: boolean): void {
  if (force || !fs.existsSync(dbFile)) return;
  const store = new Store(dbFile);
  try {
    const isDemo = store.getMeta(DEMO_MARKER) === 'true';
    const files = store.counts().files;
    if (!isDemo && files > 0) {
      throw new UsageError(`${dbFile} holds ${files} files that the demo did not make; run the demo with --db elsewhere, or --force to wipe it`);
    }
  } finally {
    store.close();
  }
}

export interface DemoOutcome {
  drops: { name: string; status: string; note: string }[];
}

export async function runDemo(io: CliIo, paths: WorkspacePaths, force: boolean): Promise<DemoOutcome> {
  guardStore(paths.dbFile, force);
  for (const suffix of ['', '-wal', '-shm']) fs.rmSync(`${paths.dbFile}${suffix}`, { force: true });
  emptyDir(paths.inbox);
  emptyDir(paths.outbox);
  emptyDir(paths.configDir, ['README.md']);
  fs.cpSync(DEMO_CONFIG_DIR, paths.configDir, { recursive: true });
  const config = loadConfig(paths.configDir);

  let clock = new Date(DEMO_TODAY);
  const ws = openWorkspace(paths, () => clock, (line) => io.stderr(`${line}\n`));
  const outcome: DemoOutcome = { drops: [] };
  try {
    ws.store.setMeta(DEMO_MARKER, 'true');
    const events = [
      ...HOLLOW_CREEK_ROUNDS.map((date, index) => ({ date, make: () => hollowCreekRound(config, index, plannedFor(ws.store, 'hollow-creek', index)) })),
      ...TAMSIN_RIDGE_ROUNDS.map((date, index) => ({ date, make: () => tamsinRidgeRound(config, index, plannedFor(ws.store, 'tamsin-ridge', index)) })),
    ].sort((a, b) => (a.date < b.date ? -1 : 1));
    for (const event of events) {
      const drops: DemoDrop[] = event.make().sort((a, b) => (a.at < b.at ? -1 : 1));
      for (const drop of drops) {
        clock = new Date(drop.at);
        const file = path.join(paths.inbox, drop.name);
        fs.writeFileSync(file, drop.bytes);
        const { receipt } = await processFile(ws, file);
        outcome.drops.push({ name: drop.name, status: receipt.status, note: drop.note });
        io.stdout(`${drop.at.slice(0, 10)}  ${receipt.status.padEnd(9)} ${drop.name}  (${drop.note})\n`);
      }
    }
    clock = new Date(DEMO_TODAY);
    regenerateOutputs(ws);
  } finally {
    ws.close();
  }
  io.stdout(`\nDemo done. Open ${path.join(paths.outbox, 'index.html')} or browse ${paths.outbox}/; inbox/archive/ holds the processed drops, inbox/rejected/ the refused one.\n`);
  return outcome;
}

/** The ropes ropewatch planned for a site's round (index 0-based), as the farm will hang them. */
function plannedFor(store: Store, siteId: string, roundIndex: number): RopeChoice[] {
  return store
    .plannedRopes(siteId)
    .filter((rope) => rope.afterRound === roundIndex)
    .map((rope) => ({ sampleId: rope.sampleId, barnId: rope.barnId, penId: rope.penId }));
}
