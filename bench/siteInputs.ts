/**
 * What every rebuild of a site's outputs still does for all of its rounds: load the site's inputs
 * from the store (`siteInputs`), build its rounds (`buildSiteRounds`) and their confidence and
 * freedom (`siteConfidence`), timed against the same three steps of another commit of ropewatch
 * (the baseline) on the same stored history. A site of 4 barns x 50 pens, a rope in every 4th pen,
 * two assays, is stored with 5, 40 and 150 rounds 14 days apart (bench/ingest.ts `writeBigExport`;
 * no plan stored, so every rope is on the lab's rows). The baseline's sources are taken from git
 * (`git archive <rev> src`) into a temporary folder and imported beside ours; the baseline's code
 * creates and fills the store, and ours opens a copy of it (so any migration of ours runs on it).
 * Each step is timed in alternating pairs (ours, baseline, ...: bench/pairs.ts), CPU beside wall;
 * every step's result must deep-equal the baseline's, or the run stops.
 *
 *   npx tsx bench/siteInputs.ts <baseline git rev> [pairs]
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { isDeepStrictEqual } from 'node:util';
import { writeManySiteConfig } from '../test/helpers/hardening.js';
import { writeBigExport } from './ingest.js';
import { describePair, pairedRatio } from './pairs.js';

const HERE = path.dirname(fileURLToPath(import.meta.url));
const REPO = path.resolve(HERE, '..');
const HISTORIES = [5, 40, 150] as const;
const SHAPE = { sites: 1, barnsPerSite: 4, pensPerRow: 25 };
const EVERY = 4;
const NOW = new Date('2032-12-01T12:00:00Z');

/** The three steps of one tree of sources, loaded by path. */
interface Steps {
  open(dir: string): Side;
}
interface Side {
  inputs(): unknown;
  rounds(inputs: unknown): unknown;
  confidence(rounds: unknown): unknown;
  close(): void;
}

async function loadSteps(srcDir: string): Promise<Steps> {
  const load = (file: string) => import(pathToFileURL(path.join(srcDir, file)).href);
  const [workspace, roundModel, confidence, spatialRound, rounds] = await Promise.all([
    load('workspace.ts'),
    load('rounds/roundModel.ts'),
    load('analysis/confidence.ts'),
    load('analysis/spatialRound.ts'),
    load('rounds/rounds.ts'),
  ]);
  return {
    open(dir: string): Side {
      const ws = workspace.openWorkspace(
        paths(dir),
        () => NOW,
        () => {},
      );
      const site = ws.config.sites[0];
      const cache = new spatialRound.OutbreakCache(ws.config.analysis);
      const today = rounds.clockDay(NOW);
      return {
        inputs: () => ws.store.siteInputs(site.id),
        rounds: (i) => {
          const inputs = i as Record<string, unknown>;
          return roundModel.buildSiteRounds(
            site,
            inputs.ropes,
            inputs.results,
            inputs.plannedWithoutResults,
            { replaced: inputs.replaced, mistyped: inputs.mistyped },
            today,
          );
        },
        confidence: (r) => confidence.siteConfidence(site, r, { settings: ws.config.analysis, outbreaks: cache }),
        close: () => ws.close(),
      };
    },
  };
}

function paths(dir: string) {
  return {
    configDir: path.join(dir, 'config'),
    // Both: the revision compared against may be older than the store's location.
    dbFile: path.join(dir, 'store.db'),
    storeLocation: { kind: 'sqlite' as const, file: path.join(dir, 'store.db') },
    inbox: path.join(dir, 'inbox'),
    outbox: path.join(dir, 'outbox'),
  };
}

/** The baseline's sources from git, with this checkout's node_modules beside them. */
function baselineSources(root: string, rev: string): string {
  const dir = path.join(root, 'baseline');
  fs.mkdirSync(dir, { recursive: true });
  const archive = execFileSync('git', ['archive', rev, 'src'], { cwd: REPO, maxBuffer: 256 * 1024 * 1024 });
  execFileSync('tar', ['-x', '-C', dir], { input: archive });
  fs.symlinkSync(path.join(REPO, 'node_modules'), path.join(dir, 'node_modules'));
  return path.join(dir, 'src');
}

/** Stores `rounds` rounds with the baseline's ingest; returns the folder for each side. */
async function prepare(root: string, baseSrc: string, rounds: number): Promise<{ base: string; ours: string }> {
  const base = path.join(root, `base-${rounds}`);
  writeManySiteConfig(path.join(base, 'config'), { ...SHAPE, programDefaults: true });
  fs.mkdirSync(path.join(base, 'inbox'), { recursive: true });
  const perRound = SHAPE.barnsPerSite * Math.ceil((2 * SHAPE.pensPerRow) / EVERY) * 2;
  const file = path.join(root, `nvdl_history_${rounds}.csv`);
  writeBigExport(file, rounds * perRound, SHAPE, EVERY);
  const { openWorkspace } = await import(pathToFileURL(path.join(baseSrc, 'workspace.ts')).href);
  const { ingestFile } = await import(pathToFileURL(path.join(baseSrc, 'ingest/ingestFile.ts')).href);
  const ws = openWorkspace(
    paths(base),
    () => NOW,
    () => {},
  );
  try {
    const receipt = await ingestFile(file, { config: ws.config, store: ws.store, now: ws.now });
    if (receipt.status !== 'accepted') throw new Error(`history export refused: ${JSON.stringify(receipt.reason)}`);
  } finally {
    ws.close();
  }
  fs.rmSync(file);
  const ours = path.join(root, `ours-${rounds}`);
  fs.cpSync(base, ours, { recursive: true });
  return { base, ours };
}

function same(step: string, rounds: number, a: unknown, b: unknown): void {
  if (!isDeepStrictEqual(a, b)) throw new Error(`${step} at ${rounds} rounds differs from the baseline's`);
}

async function main(): Promise<void> {
  const [rev, pairsArg] = process.argv.slice(2);
  if (rev === undefined) {
    process.stderr.write('usage: npx tsx bench/siteInputs.ts <baseline git rev> [pairs]\n');
    process.exit(2);
  }
  const pairs = pairsArg === undefined ? 7 : Number(pairsArg);
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-bench-site-inputs-'));
  try {
    const baseSrc = baselineSources(root, rev);
    const ours = await loadSteps(path.join(REPO, 'src'));
    const base = await loadSteps(baseSrc);
    const lines: string[] = [];
    const rows: unknown[] = [];
    for (const rounds of HISTORIES) {
      const dirs = await prepare(root, baseSrc, rounds);
      const a = ours.open(dirs.ours);
      const b = base.open(dirs.base);
      try {
        const inputsA = a.inputs();
        const inputsB = b.inputs();
        same('siteInputs', rounds, inputsA, inputsB);
        const roundsA = a.rounds(inputsA);
        const roundsB = b.rounds(inputsB);
        same('buildSiteRounds', rounds, roundsA, roundsB);
        same('siteConfidence', rounds, a.confidence(roundsA), b.confidence(roundsB));
        const steps: [string, () => unknown, () => unknown][] = [
          ['siteInputs', () => a.inputs(), () => b.inputs()],
          ['buildSiteRounds', () => a.rounds(inputsA), () => b.rounds(inputsB)],
          ['siteConfidence', () => a.confidence(roundsA), () => b.confidence(roundsB)],
          ['all three', () => a.confidence(a.rounds(a.inputs())), () => b.confidence(b.rounds(b.inputs()))],
        ];
        const checksum = (roundsA as unknown[]).length;
        for (const [name, runOurs, runBase] of steps) {
          const pair = pairedRatio(runOurs, runBase, pairs);
          lines.push(`${rounds} rounds (${checksum} formed), ${name}: ${describePair(pair)}`);
          rows.push({ rounds, step: name, ...pair });
          process.stderr.write(`${lines.at(-1)}\n`);
        }
      } finally {
        a.close();
        b.close();
      }
    }
    process.stdout.write(`${JSON.stringify({ baseline: rev, pairs, rows }, null, 2)}\n`);
  } finally {
    fs.rmSync(root, { recursive: true, force: true });
  }
}

await main();
