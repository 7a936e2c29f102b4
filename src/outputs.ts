/**
 * Rewrites a site's outputs from the store: every round's summary and cluster review, and the
 * next round's rope list (which is also stored as the expected rope sheet, so its sample IDs
 * resolve on ingest). Runs after a file's commit, never inside it: outputs show committed data
 * only. A site's inputs are loaded in one snapshot of the store and analysed apart from it
 * (src/analysis/analyseSite.ts); the files are staged under temporary names
 * and renamed together; the store then records which site version and configuration the outbox
 * shows, so a run that finds outputs behind the store (a crash or a full disk between commit and
 * outputs) rebuilds them.
 */
import fs from 'node:fs';
import path from 'node:path';
import {
  basisOfRounds,
  completeFindings,
  type AnalyseOptions,
  type SiteAnalysis,
  type SiteBasis,
} from './analysis/analyseSite.js';
import { roundDigests } from './analysis/roundDigests.js';
import { wordSiteAnalysis } from './report/siteWording.js';
import { OutbreakCache } from './analysis/spatialRound.js';
import { roundAlertRecords, SITE_ALERTS_FILE, SITE_ALERTS_SCHEMA, type AlertRecord } from './alerts/records.js';
import {
  BUILT_ROUNDS_FILE,
  builtRoundsText,
  keptTidyRows,
  readBuiltRounds,
  ROUND_FILES_VERSION,
  type BuiltRound,
  type TidyName,
} from './report/builtRounds.js';
import { alertsOfRound } from './report/html/alerts.js';
import { packageVersion } from './util/packageVersion.js';
import { waitForPidLock } from './util/pidLock.js';
import type { Site } from './config/types.js';
import { clockDay } from './rounds/rounds.js';
import { clustersCsv } from './report/clustersCsv.js';
import { removeStaleFolders, removeStrayTemps, StagedOutputs, type OutputWriter } from './report/files.js';
import { nextRoundCsv, nextRoundJson } from './report/nextRoundFiles.js';
import { writeIndex, writeSitePages } from './report/pages.js';
import { summaryCsv } from './report/summaryCsv.js';
import { jsonText } from './report/jsonText.js';
import { storeTidyRounds, TIDY_TABLES, tidyHeader } from './report/tidy/tidyTables.js';
import type { Workspace } from './workspace.js';
import { loadSiteRounds } from './roundsFromStore.js';
import type { RoundKey } from './rounds/roundInputKeys.js';
import type { BuiltHistory } from './rounds/roundHorizon.js';
import { type FailedBuild, finishOutputs, OutputError, type SiteBuild } from './siteBuild/results.js';

export type { AnalyseOptions, SiteAnalysis };
export { OutputError, type FailedBuild, type SiteBuild };

const ROUND_FOLDER = /^r\d{2,}-\d{4}-\d{2}-\d{2}$/;

/** Held by the process writing a site's outputs (its pid inside). */
const SITE_LOCK_FILE = '.outputs.lock';

/** The lock held by the process writing the site's outputs. */
export function siteLockFile(outbox: string, siteId: string): string {
  return path.join(outbox, siteId, SITE_LOCK_FILE);
}

/** Stores the plan as the next round's expected rope sheet. */
export function storePlan(ws: Workspace, analysis: SiteAnalysis): void {
  const { plan } = analysis;
  const afterRound = plan.basedOn?.round ?? 0;
  const plannedAt = ws.now().toISOString();
  ws.store.replacePlan(
    analysis.site.id,
    afterRound,
    plan.ropes.map((rope) => ({
      sampleId: rope.sampleId,
      siteId: analysis.site.id,
      barnId: rope.barnId,
      penId: rope.penId,
      side: rope.side,
      reason: rope.reason,
      dueOn: rope.dueDate,
      plannedAt,
      afterRound,
      poolId: rope.poolId ?? null,
    })),
  );
}

const json = jsonText;

/** What a build writes beyond what the analysis says: which rounds, and what it keeps of the others. */
interface RoundsToWrite {
  /** The first round (index) to write: this one and every later one are written. */
  from: number;
  /** Each round's digest (src/analysis/roundDigests.ts), kept in the built-rounds list. */
  digests: readonly string[];
  /** What the rounds before `from` were built with, by round id. */
  built: ReadonlyMap<string, BuiltRound>;
  /** Each round's key (its span and ropes' digest are kept in the built-rounds list). */
  keys: readonly RoundKey[];
  /** The committed state the build read: its site version and the keys' shared inputs digest. */
  state: Pick<BuiltHistory, 'siteVersion' | 'shared'>;
}

/** The fields of a round the build keeps: from the list for a round left alone, else `fresh`. */
function keptOr<T>(
  analysis: SiteAnalysis,
  rounds: RoundsToWrite,
  index: number,
  fresh: () => T,
  kept: (round: BuiltRound) => T,
): T {
  if (index >= rounds.from) return fresh();
  const built = rounds.built.get(analysis.summaries[index]!.round.id);
  if (!built) throw new Error(`round ${analysis.summaries[index]!.round.id} is neither written nor built before`);
  return kept(built);
}

/**
 * Writes one site's outputs under outbox/<site>/ through `writer`: the files of the rounds from
 * `rounds.from` on, and the site's own files (rope list, alerts, tidy
 * tables, pages, digest) from those rounds and what the others were built with. The built-rounds
 * list goes last.
 */
function writeSiteOutputs(ws: Workspace, analysis: SiteAnalysis, writer: OutputWriter, rounds: RoundsToWrite): void {
  const siteDir = path.join(ws.outbox, analysis.site.id);
  const { summaries, spatial } = analysis;
  const last = summaries.length - 1;
  if (rounds.from < analysis.detailFrom)
    throw new Error(
      `rounds from index ${rounds.from} are written, but only those from ${analysis.detailFrom} are summarised in full`,
    );
  const written = new Set<number>();
  for (let index = rounds.from; index <= last; index++) {
    written.add(index);
    const summary = summaries[index]!;
    const review = spatial[index];
    if (!review) throw new Error(`round ${summary.round.id} is written without its spatial review`);
    const roundDir = path.join(siteDir, summary.round.id);
    writer.write(path.join(roundDir, 'summary.json'), json(summary));
    writer.write(path.join(roundDir, 'summary.csv'), summaryCsv(summary, analysis.site.herdStatus));
    writer.write(path.join(roundDir, 'clusters.json'), json(review));
    writer.write(path.join(roundDir, 'clusters.csv'), clustersCsv(review));
  }
  writer.write(path.join(siteDir, 'next-round.json'), json(nextRoundJson(analysis.plan)));
  writer.write(path.join(siteDir, 'next-round.csv'), nextRoundCsv(analysis.plan));
  // Each round's alerts look back over the rounds before it: built once for the pages, the digest and the records.
  const alertsByRound = summaries.map((_, index) =>
    keptOr(
      analysis,
      rounds,
      index,
      () => alertsOfRound(analysis, index),
      (built) => built.alerts,
    ),
  );
  const recordsByRound = summaries.map((_, index) =>
    keptOr(
      analysis,
      rounds,
      index,
      () => roundAlertRecords(analysis, index, alertsByRound[index]!),
      (built) => built.records,
    ),
  );
  // Read by the delivery after the outputs (src/alerts/deliver.ts).
  writer.write(
    path.join(siteDir, SITE_ALERTS_FILE),
    json({ schema: SITE_ALERTS_SCHEMA, site: analysis.site.id, alerts: recordsByRound.flat() }),
  );
  const tidySizes = writeTidyTables(ws, analysis, writer, rounds, recordsByRound.slice(rounds.from).flat());
  writeSitePages(ws.outbox, ws.config, analysis, writer, alertsByRound, written);
  writer.write(
    path.join(siteDir, BUILT_ROUNDS_FILE),
    builtRoundsText(
      analysis.site.id,
      rounds.state,
      summaries.map((summary, index) => ({
        id: summary.round.id,
        startOn: rounds.keys[index]!.startOn,
        endOn: rounds.keys[index]!.endOn,
        ropes: rounds.keys[index]!.ropes,
        digest: rounds.digests[index]!,
        alerts: alertsByRound[index]!,
        records: recordsByRound[index]!,
        tidyBytes: tidySizes.byRound[index]!,
      })),
      tidySizes.total,
    ),
  );
}

/**
 * Writes results.csv, rounds.csv and alerts.csv: the rows of the rounds left alone as the files
 * hold them, then those of the rounds written, from the store's views after their facts are
 * stored. Returns the bytes each round's rows take and each file's size.
 */
function writeTidyTables(
  ws: Workspace,
  analysis: SiteAnalysis,
  writer: OutputWriter,
  rounds: RoundsToWrite,
  records: readonly AlertRecord[],
): { byRound: Record<TidyName, number>[]; total: Record<TidyName, number> } {
  const siteDir = path.join(ws.outbox, analysis.site.id);
  const fresh = storeTidyRounds(ws.store, analysis, records, rounds.from);
  const keptRounds = analysis.summaries.slice(0, rounds.from).map((summary) => rounds.built.get(summary.round.id)!);
  const kept = keptTidyRows(siteDir, keptRounds, tidyHeader);
  const byRound = [
    ...keptRounds.map((round) => round.tidyBytes),
    ...fresh.map(
      (fragments) =>
        Object.fromEntries(
          TIDY_TABLES.map((table) => [table.name, Buffer.byteLength(fragments[table.name])]),
        ) as Record<TidyName, number>,
    ),
  ];
  const total = {} as Record<TidyName, number>;
  for (const table of TIDY_TABLES) {
    const content = Buffer.concat([
      kept[table.name],
      Buffer.from(fresh.map((fragments) => fragments[table.name]).join('')),
    ]);
    total[table.name] = content.length;
    writer.write(path.join(siteDir, table.file), content);
  }
  return { byRound, total };
}

/** What every round's files rest on beyond the store: the configuration and the files' format. */
function buildSettings(ws: Workspace): string {
  return `${ws.configDigest}\nround files ${ROUND_FILES_VERSION}\nropewatch ${packageVersion()}`;
}

/** The first round whose digest differs from what its files were built from (the count when none does). */
function firstChanged(
  findings: Pick<SiteBasis, 'rounds'>,
  digests: readonly string[],
  built: ReadonlyMap<string, BuiltRound>,
): number {
  const index = findings.rounds.findIndex((round, i) => built.get(round.id)?.digest !== digests[i]);
  return index < 0 ? findings.rounds.length : index;
}

/** How long a build waits for another process writing the same site's outputs. */
const SITE_LOCK_TIMEOUT_MS = 10 * 60 * 1000;

/** Options of a build of the outputs. */
export interface BuildOptions extends AnalyseOptions {
  /** Rewrite every round, whatever was built before (`ropewatch report`). */
  full?: boolean;
}

/**
 * Analyses, plans and writes one site, and records what the outbox now shows. Rounds whose
 * findings are unchanged since their files were written are neither reviewed again nor
 * rewritten (src/report/builtRounds.ts). One process writes a site's outputs at a time.
 */
function rebuildSite(
  ws: Workspace,
  site: Site,
  cache: OutbreakCache,
  options: BuildOptions,
): { analysis: SiteAnalysis; roundsWritten: number } {
  const siteDir = path.join(ws.outbox, site.id);
  fs.mkdirSync(siteDir, { recursive: true });
  const releaseFile = waitForPidLock(siteLockFile(ws.outbox, site.id), SITE_LOCK_TIMEOUT_MS);
  let releaseStore: () => void;
  try {
    // Two machines sharing one store share no outbox lock file: the store's lock on the site keeps
    // them from building the site and replacing its plan at once.
    releaseStore = ws.store.lockSites([site.id]);
  } catch (error) {
    releaseFile();
    throw error;
  }
  const release = () => {
    try {
      releaseStore();
    } finally {
      releaseFile();
    }
  };
  try {
    // Another process may commit for this site while the outputs are written: build again from
    // the newer snapshot (a few times at most; each of those writers rebuilds after its own commit).
    for (let attempt = 1; ; attempt++) {
      const context = { config: ws.config, today: clockDay(ws.now()), cache };
      const settings = buildSettings(ws);
      const built = options.full
        ? { byId: new Map<string, BuiltRound>(), history: undefined }
        : readBuiltRounds(siteDir, site.id);
      const loaded = loadSiteRounds(ws, site, {
        today: context.today,
        settings,
        full: options.full ?? false,
        history: built.history,
      });
      const { version } = loaded.inputs;
      const basis = basisOfRounds(site, loaded.rounds, loaded.inputs.planned, context, options);
      const digests = roundDigests(basis, settings, context.today, loaded.modelDigests);
      const from = firstChanged(basis, digests, built.byId);
      const analysis = wordSiteAnalysis(completeFindings(basis, context, from));
      storePlan(ws, analysis);
      const staged = new StagedOutputs();
      try {
        loaded.keepFormed(staged);
        writeSiteOutputs(ws, analysis, staged, {
          from,
          digests,
          built: built.byId,
          keys: loaded.keys,
          state: { siteVersion: version, shared: loaded.shared },
        });
        staged.publish();
      } catch (error) {
        staged.discard();
        throw error;
      }
      // A late rope sheet can renumber rounds; folders of rounds that no longer exist go.
      removeStaleFolders(siteDir, ROUND_FOLDER, new Set(analysis.summaries.map((summary) => summary.round.id)));
      ws.store.markOutputsBuilt(ws.outbox, site.id, version, ws.configDigest);
      if (attempt >= 3 || ws.store.siteVersion(site.id) === version)
        return { analysis, roundsWritten: analysis.rounds.length - from };
    }
  } finally {
    release();
  }
}

export interface RegenerateOptions extends BuildOptions {
  /** Told before each site is built: the site, its place (1-based) and the number of sites. */
  onSite?: (site: Site, place: number, of: number) => void;
}

/** The configured sites `siteIds` names, in configuration order (every site when undefined). */
export function sitesNamed(ws: Workspace, siteIds?: readonly string[]): readonly Site[] {
  return siteIds === undefined ? ws.config.sites : ws.config.sites.filter((site) => siteIds.includes(site.id));
}

/**
 * Builds one site's outputs, as regenerateOutputs does for each: the unit the worker threads
 * (src/siteBuild/pool.ts) build too.
 */
export function buildSite(ws: Workspace, site: Site, options: BuildOptions = {}): SiteBuild {
  // The outbreak models are per site and barn: a cache per site keeps memory to one site.
  const { analysis, roundsWritten } = rebuildSite(ws, site, new OutbreakCache(ws.config.analysis), options);
  return {
    site: { id: site.id, name: site.name },
    rounds: analysis.rounds.map((round) => ({ number: round.number, id: round.id, startOn: round.startOn })),
    roundsWritten,
  };
}

/**
 * Regenerates the outputs of the named sites (all sites when none are named) from committed
 * data and stores their plans. Sites are built one at a time and nothing of a site's analysis
 * is kept once its files are written, so memory is bounded by the largest site, not the store.
 * (src/siteBuild/pool.ts builds several sites at once on worker threads.)
 * @throws OutputError when a site's outputs cannot be written (the others are still written)
 */
export function regenerateOutputs(
  ws: Workspace,
  siteIds?: readonly string[],
  options: RegenerateOptions = {},
): SiteBuild[] {
  const sites = sitesNamed(ws, siteIds);
  if (sites.length === 0) return [];
  const builds: SiteBuild[] = [];
  const failed: FailedBuild[] = [];
  sites.forEach((site, index) => {
    options.onSite?.(site, index + 1, sites.length);
    try {
      builds.push(buildSite(ws, site, options));
    } catch (error) {
      failed.push({ siteId: site.id, error });
    }
  });
  finishOutputs(ws, failed);
  return builds;
}

/**
 * Rebuilds one site's outputs (as regenerateOutputs does) and returns its analysis: for `plan`,
 * which prints it. With `full`, every round's spatial review is in it.
 * @throws OutputError when the site's outputs cannot be written
 */
export function regenerateSite(ws: Workspace, site: Site, options: BuildOptions = {}): SiteAnalysis {
  let analysis: SiteAnalysis;
  try {
    analysis = rebuildSite(ws, site, new OutbreakCache(ws.config.analysis), options).analysis;
    writeIndex(ws.outbox, ws.config);
  } catch (error) {
    throw new OutputError([site.id], error);
  }
  return analysis;
}

/**
 * Sites whose outputs are behind the store or were built under another configuration (sites
 * no file ever touched have nothing to show and are not listed).
 */
export function staleSites(ws: Workspace): string[] {
  return ws.config.sites
    .filter((site) => {
      const version = ws.store.siteVersion(site.id);
      if (version === 0) return false;
      const built = ws.store.outputsBuilt(ws.outbox, site.id);
      return built === undefined || built.siteVersion !== version || built.configDigest !== ws.configDigest;
    })
    .map((site) => site.id);
}

/**
 * Brings outputs up to date at the start of a run: removes temporary files of writers that died,
 * then rebuilds the sites that are behind. Returns the sites rebuilt.
 * @throws OutputError when they still cannot be written
 */
export function catchUpOutputs(ws: Workspace): string[] {
  removeStrayTemps(ws.outbox);
  const behind = staleSites(ws);
  if (behind.length > 0) regenerateOutputs(ws, behind);
  return behind;
}
