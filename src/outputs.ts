/**
 * Rewrites a site's outputs from the store: every round's summary (and, as later stages land,
 * clusters, plan and pages). Reads through the workspace's store connection, so inside an ingest
 * transaction it sees the file being ingested; a write failure aborts that transaction.
 */
import path from 'node:path';
import { siteConfidence } from './analysis/confidence.js';
import { summariseSite, type RoundSummary } from './analysis/roundSummary.js';
import type { Site } from './config/types.js';
import { buildSiteRounds, type SiteRound } from './interpret/roundModel.js';
import { removeStaleFolders, writeFileAtomic, writeJson } from './report/files.js';
import { summaryCsv } from './report/summaryCsv.js';
import type { StoredResult } from './store/store.js';
import type { Workspace } from './workspace.js';

export interface SiteAnalysis {
  site: Site;
  rounds: SiteRound[];
  summaries: RoundSummary[];
}

const ROUND_FOLDER = /^r\d{2,}-\d{4}-\d{2}-\d{2}$/;

/** Builds a site's analysis from the store (no writing). */
export function analyseSite(ws: Workspace, site: Site, results: readonly StoredResult[]): SiteAnalysis {
  const ropes = ws.store.ropes(site.id);
  const rounds = buildSiteRounds(site, ropes, results);
  const confidence = siteConfidence(site, rounds);
  const summaries = summariseSite(ws.config, site, rounds, confidence);
  return { site, rounds, summaries };
}

/** Writes one site's outputs under outbox/<site>/. */
export function writeSiteOutputs(ws: Workspace, analysis: SiteAnalysis): void {
  const siteDir = path.join(ws.outbox, analysis.site.id);
  for (const summary of analysis.summaries) {
    const roundDir = path.join(siteDir, summary.round.id);
    writeJson(path.join(roundDir, 'summary.json'), summary);
    writeFileAtomic(path.join(roundDir, 'summary.csv'), summaryCsv(summary));
  }
  // A late rope sheet can renumber rounds; folders of rounds that no longer exist go.
  removeStaleFolders(siteDir, ROUND_FOLDER, new Set(analysis.summaries.map((summary) => summary.round.id)));
}

/** Regenerates the outputs of the named sites (all sites when none are named). */
export function regenerateOutputs(ws: Workspace, siteIds?: readonly string[]): SiteAnalysis[] {
  const sites = siteIds === undefined ? ws.config.sites : ws.config.sites.filter((site) => siteIds.includes(site.id));
  if (sites.length === 0) return [];
  const results = ws.store.currentResults();
  const analyses = sites.map((site) => analyseSite(ws, site, results));
  for (const analysis of analyses) writeSiteOutputs(ws, analysis);
  return analyses;
}
