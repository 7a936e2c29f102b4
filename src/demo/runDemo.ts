/**
 * `ropewatch demo`: writes the invented scenario's configuration into config/, drops its files
 * into inbox/ one by one on the scenario's clock, and runs each through the same pipeline a real
 * drop takes. Processed files end in inbox/archive/, the refused one in inbox/rejected/, outputs
 * in outbox/. Running it twice gives the same outputs: it starts from an empty store each time.
 * It never replaces a configuration or a store it did not make (see guardConfig, guardStore).
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { UsageError, type CliIo } from '../cli/io.js';
import { loadConfig } from '../config/load.js';
import { deliverAlerts } from '../alerts/deliver.js';
import { regenerateOutputs } from '../outputs.js';
import { processFile } from '../pipeline.js';
import type { StoreBackend } from '../domain/store.js';
import { emptyStore } from '../store/emptyStore.js';
import { shownLocation } from '../store/location.js';
import { openStore } from '../store/openStore.js';
import { StoreOpenError } from '../store/store.js';
import { openWorkspace, type Workspace, type WorkspacePaths } from '../workspace.js';
import { DEFAULT_PLACES, OUTBOX_NAMES, STORE_LOCATION_ENV, type StoreLocation } from '../workspacePaths.js';
import { workspaceDeliveryStateFile } from '../alerts/deliveryState.js';
import { buildSiteRounds } from '../rounds/roundModel.js';
import { clockDay } from '../rounds/rounds.js';
import {
  DEMO_TODAY,
  HOLLOW_CREEK_ROUNDS,
  hollowCreekRound,
  tamsinRidgeRound,
  TAMSIN_RIDGE_ROUNDS,
  type DemoDrop,
  type RopeChoice,
} from './scenario.js';

export const DEMO_CONFIG_DIR = path.join(path.dirname(fileURLToPath(import.meta.url)), 'config');
const DEMO_MARKER = 'demo-store';
/**
 * Written beside the demo's configuration: the SHA-256 of each file the demo wrote, so that a
 * later demo (perhaps of another version, with other files) knows them from files a person wrote.
 */
export const DEMO_CONFIG_MARK = '.ropewatch-demo.json';
/** Files of a config folder the demo neither writes nor removes. */
const CONFIG_KEPT = ['README.md', '.gitkeep'];

function emptyDir(dir: string, keep: readonly string[] = ['.gitkeep']): void {
  fs.mkdirSync(dir, { recursive: true });
  for (const entry of fs.readdirSync(dir))
    if (!keep.includes(entry)) fs.rmSync(path.join(dir, entry), { recursive: true, force: true });
}

const sha256 = (bytes: Buffer) => createHash('sha256').update(bytes).digest('hex');

/** Every file under `dir`, as paths relative to it with forward slashes, sorted. */
function filesUnder(dir: string): string[] {
  const out: string[] = [];
  const walk = (current: string, rel: string) => {
    for (const entry of fs.readdirSync(current, { withFileTypes: true })) {
      const relPath = rel === '' ? entry.name : `${rel}/${entry.name}`;
      if (entry.isDirectory()) walk(path.join(current, entry.name), relPath);
      else out.push(relPath);
    }
  };
  walk(dir, '');
  return out.sort();
}

/** The demo's configuration files with their hashes. */
function demoConfigHashes(): Record<string, string> {
  return Object.fromEntries(
    filesUnder(DEMO_CONFIG_DIR).map((rel) => [rel, sha256(fs.readFileSync(path.join(DEMO_CONFIG_DIR, rel)))]),
  );
}

/**
 * Refuses to replace a configuration a person wrote: the demo writes into a config folder only
 * when it is absent, empty, or holds nothing but files the demo wrote itself (byte-equal to the
 * demo's own, or to what an earlier demo recorded in DEMO_CONFIG_MARK). --force does not lift
 * this: it concerns the store.
 */
export function guardConfig(configDir: string): void {
  if (!fs.existsSync(configDir)) return;
  if (!fs.statSync(configDir).isDirectory())
    throw new UsageError(
      `${configDir} is a file, not a configuration folder; run the demo with --config <another folder>`,
    );
  const current = demoConfigHashes();
  let recorded: Record<string, unknown> = {};
  try {
    recorded = JSON.parse(fs.readFileSync(path.join(configDir, DEMO_CONFIG_MARK), 'utf8')) as Record<string, unknown>;
  } catch {
    recorded = {};
  }
  const foreign = filesUnder(configDir).filter((rel) => {
    if (CONFIG_KEPT.includes(rel) || rel === DEMO_CONFIG_MARK) return false;
    const hash = sha256(fs.readFileSync(path.join(configDir, rel)));
    return hash !== current[rel] && hash !== recorded[rel];
  });
  if (foreign.length > 0) {
    const shown = foreign.slice(0, 5).join(', ') + (foreign.length > 5 ? ` and ${foreign.length - 5} more` : '');
    throw new UsageError(
      `${configDir} holds configuration the demo did not write (${shown}); the demo would replace it, so it stops here. ` +
        'Run it with --config <another folder> (and --db, --inbox, --outbox elsewhere), or move those files away',
    );
  }
}

/** Writes the demo's configuration and records what it wrote. */
function writeDemoConfig(configDir: string): void {
  emptyDir(configDir, CONFIG_KEPT);
  fs.cpSync(DEMO_CONFIG_DIR, configDir, { recursive: true });
  fs.writeFileSync(path.join(configDir, DEMO_CONFIG_MARK), JSON.stringify(demoConfigHashes(), null, 2) + '\n');
}

/**
 * Refuses to wipe a store that holds real data: only a store the demo made may be reset. A
 * PostgreSQL database is opened (its schema made when it has none) to tell; `--force` wipes any.
 */
function guardStore(location: StoreLocation, force: boolean): void {
  const shown = shownLocation(location);
  if (location.kind === 'sqlite') {
    if (!fs.existsSync(location.file)) return;
    if (fs.statSync(location.file).isDirectory())
      throw new UsageError(`store ${shown} is a folder; --db takes the store file`);
  }
  if (force) return;
  let store: StoreBackend;
  try {
    store = openStore(location);
  } catch (error) {
    if (error instanceof StoreOpenError)
      throw new UsageError(
        location.kind === 'sqlite'
          ? `${error.message}. The demo leaves it alone: run it with --db elsewhere, or --force to replace the file`
          : `${error.message}; check --db (or ${STORE_LOCATION_ENV})`,
      );
    throw error;
  }
  try {
    const isDemo = store.getMeta(DEMO_MARKER) === 'true';
    const files = store.counts().files;
    if (!isDemo && files > 0) {
      throw new UsageError(
        `${shown} holds ${files} files that the demo did not make; run the demo with --db elsewhere, or --force to wipe it`,
      );
    }
  } finally {
    store.close();
  }
}

export interface DemoOutcome {
  drops: { name: string; status: string; note: string }[];
}

export async function runDemo(io: CliIo, paths: WorkspacePaths, force: boolean): Promise<DemoOutcome> {
  guardConfig(paths.configDir);
  guardStore(paths.storeLocation, force);
  try {
    emptyStore(paths.storeLocation);
  } catch (error) {
    if (error instanceof StoreOpenError)
      throw new UsageError(`${error.message}; check --db (or ${STORE_LOCATION_ENV})`);
    throw error;
  }
  fs.rmSync(workspaceDeliveryStateFile(paths), { force: true });
  emptyDir(paths.inbox);
  emptyDir(paths.outbox);
  writeDemoConfig(paths.configDir);
  const config = loadConfig(paths.configDir);

  let clock = new Date(DEMO_TODAY);
  const ws = openWorkspace(
    paths,
    () => clock,
    (line) => io.stderr(`${line}\n`),
  );
  const outcome: DemoOutcome = { drops: [] };
  try {
    ws.store.setMeta(DEMO_MARKER, 'true');
    const events = [
      ...HOLLOW_CREEK_ROUNDS.map((date, index) => ({
        date,
        make: () => hollowCreekRound(config, index, plannedFor(ws.store, 'hollow-creek', index)),
      })),
      ...TAMSIN_RIDGE_ROUNDS.map((date, index) => ({
        date,
        make: () => tamsinRidgeRound(config, index, plannedFor(ws.store, 'tamsin-ridge', index)),
      })),
    ].sort((a, b) => (a.date < b.date ? -1 : 1));
    for (const event of events) {
      const drops: DemoDrop[] = (await event.make()).sort((a, b) => (a.at < b.at ? -1 : 1));
      for (const drop of drops) {
        clock = new Date(drop.at);
        const file = path.join(paths.inbox, drop.name);
        fs.writeFileSync(file, drop.bytes);
        const { receipt } = await processFile(ws, file);
        // Alerts reach the feed as each drop is processed (outbox/alerts.jsonl, seen at the drop's time).
        await deliverAlerts(ws, { env: io.env });
        outcome.drops.push({ name: drop.name, status: receipt.status, note: drop.note });
        io.stdout(`${drop.at.slice(0, 10)}  ${receipt.status.padEnd(9)} ${drop.name}  (${drop.note})\n`);
        if (receipt.kind === 'ropes') for (const line of roundsAwaiting(ws, receipt.sites, clock)) io.stdout(line);
      }
    }
    clock = new Date(DEMO_TODAY);
    regenerateOutputs(ws);
    await deliverAlerts(ws, { env: io.env });
  } finally {
    ws.close();
  }
  io.stdout(
    `\nDemo done. Open ${path.join(paths.outbox, OUTBOX_NAMES.indexPage)} or browse ${paths.outbox}/; ${DEFAULT_PLACES.archive} holds the processed drops, ${DEFAULT_PLACES.rejected} the refused one.\n`,
  );
  return outcome;
}

/**
 * A rope sheet usually arrives days before its results: where the latest round of each site the
 * sheet touched stands when it arrives (awaiting results: nothing missing yet).
 */
function roundsAwaiting(ws: Workspace, siteIds: readonly string[], now: Date): string[] {
  return ws.config.sites
    .filter((site) => siteIds.includes(site.id))
    .flatMap((site) => {
      const last = buildSiteRounds(
        site,
        ws.store.ropes(site.id),
        ws.store.currentResults(site.id),
        ws.store.plannedWithoutResults(site.id),
        {},
        clockDay(now),
      ).at(-1);
      if (!last || last.state === 'complete') return [];
      return [
        `            ${site.id} ${last.id}: ${last.state === 'awaiting-results' ? 'awaiting results' : 'partial results'}, due by ${last.resultsDueOn}; no rope is missing before then\n`,
      ];
    });
}

/** The ropes ropewatch planned for a site's round (index 0-based), as the farm will hang them. */
function plannedFor(store: StoreBackend, siteId: string, roundIndex: number): RopeChoice[] {
  return store
    .plannedRopes(siteId)
    .filter((rope) => rope.afterRound === roundIndex)
    .map((rope) => ({
      sampleId: rope.sampleId,
      barnId: rope.barnId,
      penId: rope.penId,
      ...(rope.poolId === null || rope.poolId === undefined ? {} : { poolId: rope.poolId }),
    }));
}
