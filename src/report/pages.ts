/**
 * The pages people read, written beside the JSON and CSV outputs: for every round of a site a
 * summary (clinic staff) and a cluster review (vet), the next round's rope sheet (producer), a
 * small digest per site, and the index of all sites built from those digests. Every file goes
 * through writeFileAtomic; no clock is read, so the same analysis gives the same bytes.
 */
import fs from 'node:fs';
import path from 'node:path';
import { INDEX_PAGE } from '../config/names.js';
import type { Config } from '../config/types.js';
import type { SiteAnalysis } from '../analysis/analyseSite.js';
import { sinceLastRound } from '../analysis/sinceLastRound.js';
import { notifiableNotice } from './cautions.js';
import { atomicWriter, type OutputWriter } from './files.js';
import { alertsOfRounds, type PageAlert } from './html/alerts.js';
import { renderClustersPage } from './html/clustersPage.js';
import { herdStatusBlock } from './html/herdStatus.js';
import { DIGEST_SCHEMA, renderIndexPage, type SiteDigest } from './html/indexPage.js';
import { renderPlanPage } from './html/planPage.js';
import { renderRopeSheetPage } from './html/ropeSheetPage.js';
import { nextRoundLabelPages } from './nextRoundFiles.js';
import { jsonText } from './jsonText.js';
import { renderSummaryPage } from './html/summaryPage.js';

export type { SiteDigest } from './html/indexPage.js';

/** Notifiable notices for the assays a page shows, in the given order. */
function noticesFor(config: Config, assayIds: readonly string[]): string[] {
  return [...new Set(assayIds)].flatMap((id) => {
    const assay = config.assayById.get(id);
    return assay?.notifiable ? [notifiableNotice(assay.name)] : [];
  });
}

/** The digest of one site for the index (also written as site.json). */
export function siteDigest(
  config: Config,
  analysis: SiteAnalysis,
  alerts: readonly PageAlert[][] = alertsOfRounds(analysis),
): SiteDigest {
  const { site, summaries, plan } = analysis;
  const lastIndex = summaries.length - 1;
  const latest = summaries[lastIndex];
  const rounds = summaries.map((summary) => ({
    id: summary.round.id,
    startOn: summary.round.startOn,
    summary: `${site.id}/${summary.round.id}/summary.html`,
    clusters: `${site.id}/${summary.round.id}/clusters.html`,
  }));
  const siteAssays =
    summaries.length > 0
      ? summaries.flatMap((summary) => summary.assays.map((assay) => assay.id))
      : config.assays.map((assay) => assay.id);
  return {
    schema: DIGEST_SCHEMA,
    site: { id: site.id, name: site.name },
    latestRound: latest
      ? { number: latest.round.number, id: latest.round.id, startOn: latest.round.startOn, endOn: latest.round.endOn }
      : null,
    alerts: latest ? [...alerts[lastIndex]!] : [],
    notices: noticesFor(config, siteAssays),
    nextRound: { round: plan.round, dueDate: plan.dueDate, overdue: plan.overdue, daysOverdue: plan.daysOverdue },
    links: {
      summary: rounds.at(-1)?.summary ?? null,
      clusters: rounds.at(-1)?.clusters ?? null,
      nextRound: `${site.id}/next-round.html`,
      plan: `${site.id}/plan.html`,
      rounds,
    },
  };
}

/**
 * Writes a site's pages: outbox/<site>/<round>/summary.html and clusters.html for every round,
 * outbox/<site>/next-round.html (the rope sheet) with its tube-label pages, outbox/<site>/plan.html (the plan's reasoning), and outbox/<site>/site.json (the digest writeIndex reads).
 * @param outbox the outbox folder (absolute or relative to the process)
 * @param config the normalised configuration (assay names, cutoffs, notifiable flags, alpha)
 * @param analysis the site's analysis from analyseSite
 * @param writer where the files go (default: each atomically to its name)
 * @param alertsByRound every round's alerts (alertsOfRounds), when the caller has them already
 * @param rounds the rounds (indices) whose pages to write (default every round); their spatial
 *   review and that of the rounds their pages look back on must be in the analysis
 * @throws whatever the file system throws
 */
export function writeSitePages(
  outbox: string,
  config: Config,
  analysis: SiteAnalysis,
  writer: OutputWriter = atomicWriter,
  alertsByRound: readonly PageAlert[][] = alertsOfRounds(analysis),
  rounds?: ReadonlySet<number>,
): void {
  const { site, summaries, spatial, plan } = analysis;
  const siteDir = path.join(outbox, site.id);
  summaries.forEach((summary, index) => {
    if (rounds !== undefined && !rounds.has(index)) return;
    const roundDir = path.join(siteDir, summary.round.id);
    const alerts = alertsByRound[index]!;
    const notices = noticesFor(
      config,
      summary.assays.map((assay) => assay.id),
    );
    const current = analysis.rounds.find((round) => round.id === summary.round.id);
    const before = index > 0 ? analysis.rounds.find((round) => round.id === summaries[index - 1]!.round.id) : undefined;
    const since = current ? sinceLastRound(before ?? null, current) : undefined;
    const herdStatus = herdStatusBlock(site.herdStatus, summary);
    writer.write(
      path.join(roundDir, 'summary.html'),
      renderSummaryPage({ summary, alerts, notices, herdStatus, ...(since ? { since } : {}) }),
    );
    writer.write(
      path.join(roundDir, 'clusters.html'),
      renderClustersPage({
        site,
        summaries,
        spatial,
        index,
        assays: config.assayById,
        alpha: config.analysis.alpha,
        alerts,
        notices,
        herdStatus,
      }),
    );
  });
  const digest = siteDigest(config, analysis, alertsByRound);
  writer.write(
    path.join(siteDir, 'next-round.html'),
    renderRopeSheetPage({
      site,
      plan,
      notices: digest.notices,
      herdStatus: herdStatusBlock(site.herdStatus, summaries.at(-1)),
    }),
  );
  for (const page of nextRoundLabelPages(plan, digest.notices)) writer.write(path.join(siteDir, page.file), page.html);
  writer.write(
    path.join(siteDir, 'plan.html'),
    renderPlanPage({ plan, notices: digest.notices, herdStatus: herdStatusBlock(site.herdStatus, summaries.at(-1)) }),
  );
  writer.write(path.join(siteDir, 'site.json'), jsonText(digest));
}

function readDigest(file: string): SiteDigest | null {
  try {
    const value = JSON.parse(fs.readFileSync(file, 'utf8')) as Partial<SiteDigest>;
    return value.schema === DIGEST_SCHEMA && typeof value.site?.id === 'string' ? (value as SiteDigest) : null;
  } catch {
    // A digest that cannot be read is left out of the index rather than breaking it.
    return null;
  }
}

/**
 * Writes outbox/index.html from every outbox/<site>/site.json: sites in config order first,
 * then any other digests found (by id), so regenerating one site keeps the others listed.
 * @param outbox the outbox folder
 * @param config the configuration (site order, organisation name)
 */
export function writeIndex(outbox: string, config: Config): void {
  const digests: SiteDigest[] = [];
  if (fs.existsSync(outbox)) {
    for (const entry of fs.readdirSync(outbox, { withFileTypes: true })) {
      if (!entry.isDirectory()) continue;
      const file = path.join(outbox, entry.name, 'site.json');
      if (!fs.existsSync(file)) continue;
      const digest = readDigest(file);
      if (digest) digests.push(digest);
    }
  }
  const rank = new Map(config.sites.map((site, index) => [site.id, index]));
  digests.sort(
    (a, b) =>
      (rank.get(a.site.id) ?? Infinity) - (rank.get(b.site.id) ?? Infinity) ||
      (a.site.id < b.site.id ? -1 : a.site.id > b.site.id ? 1 : 0),
  );
  atomicWriter.write(path.join(outbox, INDEX_PAGE), renderIndexPage(digests, config.organisation));
}
