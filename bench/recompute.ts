/**
 * Recompute benchmark: `regenerateOutputs(ws)` (src/outputs.ts: rounds, detection confidence,
 * summaries, spatial statistics, next-round plans, all files) over a store of 2,000 site-rounds:
 * 200 invented sites x 10 rounds, 4 barns of 50 pens each, a rope in every 4th pen each round
 * (the start moving one pen per round) and two assays per rope. The store is filled through the
 * ingest code (`ingestFile`, outputs step left out) before timing. There is no same-run baseline
 * for the analysis; the row reports total time and time per site-round.
 *
 *   npx tsx bench/recompute.ts [sites]      (or: npm run bench -- recompute)
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { ingestFile } from '../src/ingest/ingestFile.js';
import { regenerateOutputs } from '../src/outputs.js';
import { openWorkspace } from '../src/workspace.js';
import { writeManySiteConfig } from '../test/helpers/hardening.js';
import { writeBigExport } from './ingest.js';
import type { BenchRow } from './types.js';

const ROUNDS = 10;
const SHAPE = { barnsPerSite: 4, pensPerRow: 25 };
const EVERY = 4;

/** Times one full regenerateOutputs over `sites` x 10 rounds (default 200 sites: 2,000 site-rounds). */
export async function benchRecompute(sites = 200): Promise<BenchRow[]> {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-bench-recompute-'));
  try {
    const shape = { sites, ...SHAPE };
    const paths = {
      configDir: path.join(root, 'config'),
      dbFile: path.join(root, 'store.db'),
      inbox: path.join(root, 'inbox'),
      outbox: path.join(root, 'outbox'),
    };
    writeManySiteConfig(paths.configDir, shape);
    fs.mkdirSync(paths.inbox, { recursive: true });
    const rows = sites * SHAPE.barnsPerSite * Math.ceil((2 * SHAPE.pensPerRow) / EVERY) * 2 * ROUNDS;
    const file = path.join(paths.inbox, 'nvdl_recompute.csv');
    writeBigExport(file, rows, shape, EVERY);
    const ws = openWorkspace(
      paths,
      () => new Date('2026-12-01T12:00:00Z'),
      () => {},
    );
    try {
      const receipt = await ingestFile(file, { config: ws.config, store: ws.store, now: ws.now });
      if (receipt.status !== 'accepted') throw new Error(`recompute export refused: ${JSON.stringify(receipt.reason)}`);
      const started = performance.now();
      const builds = regenerateOutputs(ws, undefined, { full: true });
      const ms = performance.now() - started;
      const siteRounds = builds.reduce((sum, build) => sum + build.rounds.length, 0);
      process.stderr.write(
        `bench recompute: ${siteRounds} site-rounds from ${receipt.rows.accepted} rows in ${(ms / 1000).toFixed(1)} s\n`,
      );
      return [
        {
          name: `regenerateOutputs, ${siteRounds} site-rounds (${sites} sites)`,
          value: ms / 1000,
          unit: 's',
          note: `checksum ${siteRounds} site-rounds, ${receipt.rows.accepted} rows`,
        },
        { name: 'regenerateOutputs per site-round', value: ms / siteRounds, unit: 'ms' },
      ];
    } finally {
      ws.close();
    }
  } finally {
    fs.rmSync(root, { recursive: true, force: true });
  }
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/'));
if (invokedDirectly)
  process.stdout.write(
    JSON.stringify(await benchRecompute(process.argv[2] ? Number(process.argv[2]) : undefined), null, 2) + '\n',
  );
