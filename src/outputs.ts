/**
 * Rewrites a site's outputs from the store: every round's summary and cluster review, and the
 * next round's rope list (which is also stored as the expected rope sheet, so its sample IDs
 * resolve on ingest). Reads through the workspace's store connection, so inside an ingest
 * transaction it sees the file being ingested; a write failure aborts that transaction.
 */
import { format } from 'date-fns';
import path from 'node:path';
import { siteConfidence, type RoundConfidence } from './analysis/confidence.js';
import { planNextRound, type NextRoundPlan } from './analysis/nextRound.js';
import { summariseSite, type RoundSummary } from './analysis/roundSummary.js';
import { OutbreakCache, siteSpatial, type RoundSpatial } from './analysis/spatialRound.js';
import type { Site } from './config/types.js';
import { buildSiteRounds, type SiteRound } from './interpret/roundModel.js';
import { clustersCsv } from './report/clustersCsv.js';
import { removeStaleFolders, writeFileAtomic, writeJson } from './report/files.js';
import { nextRoundCsv, nextRoundJson } from './report/nextRoundFiles.js';
import { writeIndex, writeSitePages } from './report/pages.js';
import { summaryCsv } from './report/summaryCsv.js';
import type { StoredResult } from './store/store.js';
import type { Workspace } from './workspace.js';

export interface SiteAnalysis {
  site: Site;
  rounds: SiteRound[];
  confidence: RoundConfidence[];
  summaries: RoundSummary[];
  spatial: RoundSpatial[];
  plan: NextRoundPlan;
}

const ROUND_FOLDER = /^r\d{2,}-\d{4}-\d{2}-\d{2}$/;

export interface AnalyseOptions {
  budget?: number;
}

/** Builds a site's analysis from the store (no writing). */
export function analyseSite(ws: Workspace, site: Site, results: readonly StoredResult[], cache: OutbreakCache, options: AnalyseOptions = {}): SiteAnalysis {
  const ropes = ws.store.ropes(site.id);
  const rounds = buildSiteRounds(site, ropes, results, ws.store.plannedWithoutResults(site.id));
  const confidence = siteConfidence(site, rounds);
  const summaries = summariseSite(ws.config, site, rounds, confidence);
  const spatial = siteSpatial(site, rounds, confidence, ws.config.analysis, cache);
  const lastNumber = rounds.at(-1)?.number ?? 0;
  const existingIds = new Map(
    ws.store
      .plannedRopes(site.id)
      .filter((rope) => rope.afterRound === lastNumber)
      .map((rope) => [`${rope.barnId}/${rope.penId}`, rope.sampleId] as const),
  );
  const plan = planNextRound({
    site,
    rounds,
    confidence,
    spatial,
    settings: ws.config.analysis,
    cache,
    today: format(ws.now(), 'yyyy-MM-dd'),
    existingIds,
    ...(options.budget !== undefined ? { budget: options.budget } : {}),
  });
  return { site, rounds, confidence, summaries, spatial, plan };
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
    })),
  );
}

/** Writes one site's outputs under outbox/<site>/. */
export function writeSiteOutputs(ws: Workspace, analysis: SiteAnalysis): void {
  const siteDir = path.join(ws.outbox, analysis.site.id);
  analysis.summaries.forEach((summary, index) => {
    const roundDir = path.join(siteDir, summary.round.id);
    writeJson(path.join(roundDir, 'summary.json'), summary);
    writeFileAtomic(path.join(roundDir, 'summary.csv'), summaryCsv(summary));
    const spatial = analysis.spatial[index]!;
    writeJson(path.join(roundDir, 'clusters.json'), spatial);
    writeFileAtomic(path.join(roundDir, 'clusters.csv'), clustersCsv(spatial));
  });
  writeJson(path.join(siteDir, 'next-round.json'), nextRoundJson(analysis.plan));
  writeFileAtomic(path.join(siteDir, 'next-round.csv'), nextRoundCsv(analysis.plan));
  writeSitePages(ws.outbox, ws.config, analysis);
  // A late rope sheet can renumber rounds; folders of rounds that no longer exist go.
  removeStaleFolders(siteDir, ROUND_FOLDER, new Set(analysis.summaries.map((summary) => summary.round.id)));
}

/** Regenerates the outputs of the named sites (all sites when none are named) and stores their plans. */
export function regenerateOutputs(ws: Workspace, siteIds?: readonly string[], options: AnalyseOptions = {}): SiteAnalysis[] {
  const sites = siteIds === undefined ? ws.config.sites : ws.config.sites.filter((site) => siteIds.includes(site.id));
  if (sites.length === 0) return [];
  const cache = new OutbreakCache(ws.config.analysis);
  const analyses = sites.map((site) => analyseSite(ws, site, ws.store.currentResults(site.id), cache, options));
  for (const analysis of analyses) {
    storePlan(ws, analysis);
    writeSiteOutputs(ws, analysis);
  }
  writeIndex(ws.outbox, ws.config);
  return analyses;
}
