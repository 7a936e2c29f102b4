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
import path from 'node:path';
import { analyseSite, type AnalyseOptions, type SiteAnalysis } from './analysis/analyseSite.js';
import { wordSiteAnalysis } from './report/siteWording.js';
import { OutbreakCache } from './analysis/spatialRound.js';
import { SITE_ALERTS_FILE, siteAlertsFile } from './alerts/records.js';
import type { Site } from './config/types.js';
import { clockDay } from './rounds/rounds.js';
import { clustersCsv } from './report/clustersCsv.js';
import { removeStaleFolders, removeStrayTemps, StagedOutputs, type OutputWriter } from './report/files.js';
import { nextRoundCsv, nextRoundJson } from './report/nextRoundFiles.js';
import { alertsOfRounds } from './report/html/alerts.js';
import { writeIndex, writeSitePages } from './report/pages.js';
import { summaryCsv } from './report/summaryCsv.js';
import { jsonText } from './report/jsonText.js';
import { writeTidyTables } from './report/tidy/tidyTables.js';
import type { Workspace } from './workspace.js';

export type { AnalyseOptions, SiteAnalysis };

const ROUND_FOLDER = /^r\d{2,}-\d{4}-\d{2}-\d{2}$/;

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

/** Writes one site's outputs under outbox/<site>/ through `writer`. */
export function writeSiteOutputs(ws: Workspace, analysis: SiteAnalysis, writer: OutputWriter): void {
  const siteDir = path.join(ws.outbox, analysis.site.id);
  analysis.summaries.forEach((summary, index) => {
    const roundDir = path.join(siteDir, summary.round.id);
    writer.write(path.join(roundDir, 'summary.json'), json(summary));
    writer.write(path.join(roundDir, 'summary.csv'), summaryCsv(summary, analysis.site.herdStatus));
    const spatial = analysis.spatial[index]!;
    writer.write(path.join(roundDir, 'clusters.json'), json(spatial));
    writer.write(path.join(roundDir, 'clusters.csv'), clustersCsv(spatial));
  });
  writer.write(path.join(siteDir, 'next-round.json'), json(nextRoundJson(analysis.plan)));
  writer.write(path.join(siteDir, 'next-round.csv'), nextRoundCsv(analysis.plan));
  // Read by the delivery after the outputs (src/alerts/deliver.ts).
  // Each round's alerts look back over the rounds before it: built once for the pages, the digest and the records.
  const alertsByRound = alertsOfRounds(analysis);
  const alertsFile = siteAlertsFile(analysis, alertsByRound);
  writer.write(path.join(siteDir, SITE_ALERTS_FILE), json(alertsFile));
  writeTidyTables(ws.store.db, analysis, alertsFile.alerts, siteDir, writer);
  writeSitePages(ws.outbox, ws.config, analysis, writer, alertsByRound);
}

/** Analyses, plans and writes one site, and records what the outbox now shows. */
function rebuildSite(ws: Workspace, site: Site, cache: OutbreakCache, options: AnalyseOptions): SiteAnalysis {
  // Another process may commit for this site while the outputs are written: build again from
  // the newer snapshot (a few times at most; each of those writers rebuilds after its own commit).
  for (let attempt = 1; ; attempt++) {
    const inputs = ws.store.siteInputs(site.id);
    const { version } = inputs;
    const analysis = wordSiteAnalysis(
      analyseSite(site, inputs, { config: ws.config, today: clockDay(ws.now()), cache }, options),
    );
    storePlan(ws, analysis);
    const staged = new StagedOutputs();
    try {
      writeSiteOutputs(ws, analysis, staged);
      staged.publish();
    } catch (error) {
      staged.discard();
      throw error;
    }
    // A late rope sheet can renumber rounds; folders of rounds that no longer exist go.
    removeStaleFolders(
      path.join(ws.outbox, site.id),
      ROUND_FOLDER,
      new Set(analysis.summaries.map((summary) => summary.round.id)),
    );
    ws.store.markOutputsBuilt(ws.outbox, site.id, version, ws.configDigest);
    if (attempt >= 3 || ws.store.siteVersion(site.id) === version) return analysis;
  }
}

/** Thrown when outputs could not be written: the store holds the data, the outbox is behind it. */
export class OutputError extends Error {
  override readonly name = 'OutputError';
  constructor(
    readonly siteIds: readonly string[],
    reason: unknown,
  ) {
    super(
      `the outputs of ${siteIds.join(', ')} could not be written (${reason instanceof Error ? reason.message : String(reason)}); ` +
        'the store holds the data, and the outputs are rebuilt on the next run (or with `ropewatch report`)',
      { cause: reason },
    );
  }
}

/**
 * Regenerates the outputs of the named sites (all sites when none are named) from committed
 * data and stores their plans.
 * @throws OutputError when a site's outputs cannot be written (the others are still written)
 */
export function regenerateOutputs(
  ws: Workspace,
  siteIds?: readonly string[],
  options: AnalyseOptions = {},
): SiteAnalysis[] {
  const sites = siteIds === undefined ? ws.config.sites : ws.config.sites.filter((site) => siteIds.includes(site.id));
  if (sites.length === 0) return [];
  const cache = new OutbreakCache(ws.config.analysis);
  const analyses: SiteAnalysis[] = [];
  const failed: { siteId: string; error: unknown }[] = [];
  for (const site of sites) {
    try {
      analyses.push(rebuildSite(ws, site, cache, options));
    } catch (error) {
      failed.push({ siteId: site.id, error });
    }
  }
  try {
    writeIndex(ws.outbox, ws.config);
  } catch (error) {
    failed.push({ siteId: 'the index page', error });
  }
  if (failed.length > 0)
    throw new OutputError(
      failed.map((failure) => failure.siteId),
      failed[0]!.error,
    );
  return analyses;
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
