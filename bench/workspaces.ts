/**
 * Generated workspaces for the benchmarks: invented sites of 4 barns x 50 pens (two rows of 25), a
 * rope in every 4th pen each round (the start moving one pen per round) and two assays per rope,
 * filled through the ingest code with one generated lab export of the rounds wanted.
 */
import fs from 'node:fs';
import path from 'node:path';
import { ingestFile } from '../src/ingest/ingestFile.js';
import { openWorkspace, type Workspace, type WorkspacePaths } from '../src/workspace.js';
import { writeManySiteConfig } from '../test/helpers/hardening.js';
import { writeBigExport } from './ingest.js';

export const SITE_SHAPE = Object.freeze({ barnsPerSite: 4, pensPerRow: 25 });
export const EVERY = 4;

export function workspacePaths(dir: string): WorkspacePaths & { dbFile: string } {
  const dbFile = path.join(dir, 'store.db');
  return {
    configDir: path.join(dir, 'config'),
    storeLocation: { kind: 'sqlite', file: dbFile },
    dbFile,
    inbox: path.join(dir, 'inbox'),
    outbox: path.join(dir, 'outbox'),
  };
}

/** Rows of one round of every site: generous, the generator stops at the round's end. */
export function rowsPerRound(sites: number): number {
  return sites * SITE_SHAPE.barnsPerSite * Math.ceil((2 * SITE_SHAPE.pensPerRow) / EVERY) * 2;
}

/** Opens the workspace at `dir` with a fixed clock and no log. */
export function openBenchWorkspace(dir: string, now: Date): Workspace {
  return openWorkspace(
    workspacePaths(dir),
    () => now,
    () => {},
  );
}

/**
 * A workspace under `dir` whose store holds rounds `0 .. rounds - 1` of `sites` sites (program
 * defaults: 999 permutations, 2,000 simulated outbreaks), outputs not built, the pens and positives
 * shifted by `patternShift` (dropPatternShift). Returns the rows stored.
 */
export async function storeRounds(
  dir: string,
  sites: number,
  rounds: number,
  now: Date,
  patternShift = 0,
): Promise<number> {
  const paths = workspacePaths(dir);
  writeManySiteConfig(paths.configDir, { sites, ...SITE_SHAPE, programDefaults: true });
  fs.mkdirSync(paths.inbox, { recursive: true });
  const history = path.join(dir, `nvdl_history_${rounds}.csv`);
  writeBigExport(history, rounds * rowsPerRound(sites), { sites, ...SITE_SHAPE }, EVERY, 0, patternShift);
  const ws = openBenchWorkspace(dir, now);
  try {
    const receipt = await ingestFile(history, { config: ws.config, store: ws.store, now: ws.now });
    if (receipt.status !== 'accepted') throw new Error(`history export refused: ${JSON.stringify(receipt.reason)}`);
    return receipt.rows.accepted;
  } finally {
    ws.close();
    fs.rmSync(history, { force: true });
  }
}

/** The round (0-based) whose pens and positives every dropped export carries. */
export const DROP_PATTERN_ROUND = 5;

/** How often the generated pens and positives repeat (bench/ingest.ts writeBigExport), in rounds. */
const PATTERN_PERIOD = 40;

/**
 * The pattern shift of a history of `rounds` rounds: the next round's export then carries the pens
 * and positives of DROP_PATTERN_ROUND, and the history's last round those of the round before it,
 * whatever the history's length. A drop reviews the new round and the one before it again, and
 * how many pens are positive, and where, sets that work: with the same two rounds, a ratio of
 * drops after different histories measures the history. None for 5 rounds.
 */
export function dropPatternShift(rounds: number): number {
  return (((DROP_PATTERN_ROUND - rounds) % PATTERN_PERIOD) + PATTERN_PERIOD) % PATTERN_PERIOD;
}

/** Writes the export of round `round` (0-based) of every site to `file`, its pens and positives shifted by `patternShift`. */
export function writeRoundExport(file: string, sites: number, round: number, patternShift = 0): void {
  writeBigExport(file, rowsPerRound(sites), { sites, ...SITE_SHAPE }, EVERY, round, patternShift);
}

export interface OutboxFigures {
  /** Files (and their bytes) modified at or after `since`. */
  filesWritten: number;
  bytesWritten: number;
  outboxFiles: number;
  outboxBytes: number;
}

/** Counts the outbox's files and bytes, and those written since `sinceMs` (epoch ms). */
export function outboxFigures(outbox: string, sinceMs: number): OutboxFigures {
  const figures: OutboxFigures = { filesWritten: 0, bytesWritten: 0, outboxFiles: 0, outboxBytes: 0 };
  if (!fs.existsSync(outbox)) return figures;
  for (const entry of fs.readdirSync(outbox, { withFileTypes: true, recursive: true })) {
    if (!entry.isFile()) continue;
    const stat = fs.statSync(path.join(entry.parentPath, entry.name));
    figures.outboxFiles++;
    figures.outboxBytes += stat.size;
    if (stat.mtimeMs >= sinceMs - 1) {
      figures.filesWritten++;
      figures.bytesWritten += stat.size;
    }
  }
  return figures;
}

/** How many of the sites have a next-round list in the outbox (a site's outputs are published together). */
export function sitesWritten(outbox: string, siteIds: readonly string[]): number {
  return siteIds.filter((id) => fs.existsSync(path.join(outbox, id, 'next-round.json'))).length;
}

/** The arguments of `ropewatch report` (the compiled `bin`) on the workspace at `paths`, `options` before its folders. */
export function reportArgs(
  bin: string,
  paths: ReturnType<typeof workspacePaths>,
  options: readonly string[] = [],
): string[] {
  return [
    bin,
    'report',
    ...options,
    '--config',
    paths.configDir,
    '--db',
    paths.dbFile,
    '--inbox',
    paths.inbox,
    '--outbox',
    paths.outbox,
  ];
}

/** A report's progress on a terminal: the site being built (site folders published so far, plus one) and the time. */
export function siteProgressText(outbox: string, siteIds: readonly string[], elapsedMs: number): string {
  return `site ${Math.min(sitesWritten(outbox, siteIds) + 1, siteIds.length)} of ${siteIds.length}, ${(elapsedMs / 1000).toFixed(0)} s`;
}
