/**
 * Cluster review, for the herd veterinarian: per assay and barn a map from the real layout
 * (load shading, positives outlined, clusters boxed), the earlier rounds as small maps beside it,
 * the spatial statistics with their p-values and a one-line reading of each, and a Ct trend
 * per positive pen. Reads the analysis; computes no statistic.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import type { AssaySpatial } from '../../analysis/spatialRound.js';
import { antibodyMeaning } from '../summaryNotices.js';
import { barnSection, type ClustersPageInput } from './clusterBarn.js';
import { escapeHtml } from './escape.js';
import { mapLegend } from './mapMarks.js';
import { siteTally } from '../siteTally.js';
import { formatJoinCountP } from '../../util/format.js';
import { num, renderPage } from './page.js';

export type { ClustersPageInput } from './clusterBarn.js';

/**
 * The sequencing candidates of one assay: positive pens below the assay's `sequencingBelow`,
 * with the plain reading; nothing when the assay has no threshold or the round no positive.
 */
export function sequencingBlock(summary: RoundSummary, assayId: string): string {
  const entry = summary.sequencing.find((candidate) => candidate.assayId === assayId);
  const positives = siteTally(summary, assayId).positive;
  if (!entry || positives === 0) return '';
  const labs = [...new Set(entry.pens.map((pen) => pen.labName))];
  const byBarn = [...new Set(entry.pens.map((pen) => pen.barnId))].map(
    (barnId) =>
      `${escapeHtml(barnId)}: ${entry.pens
        .filter((pen) => pen.barnId === barnId)
        .map(
          (pen) =>
            `${escapeHtml(pen.penId)} (${num(pen.ct, 1)}${labs.length > 1 ? `, ${escapeHtml(pen.labName)}` : ''})`,
        )
        .join(', ')}`,
  );
  return (
    `<p data-sequencing="${escapeHtml(assayId)}"><strong>Sequencing candidates</strong> (pen, Ct): ` +
    (byBarn.length > 0
      ? `${byBarn.join('; ')}. `
      : `none: no positive pen this round has a Ct below ${entry.sequencingBelow}. `) +
    `<span class="muted">${escapeHtml(entry.reading)}</span></p>`
  );
}

/** The cutoffs this round's results were read with, lab by lab (the labs' own, from their profiles). */
export function cutoffsSentence(summary: RoundSummary): string {
  const byLab = new Map<string, RoundSummary['cutoffs']>();
  for (const cutoff of summary.cutoffs) byLab.set(cutoff.labName, [...(byLab.get(cutoff.labName) ?? []), cutoff]);
  if (byLab.size === 0) return '';
  const labText = (cutoffs: RoundSummary['cutoffs']) => {
    // Assays sharing the suspect cutoff and cycle limit are named together.
    const groups = new Map<string, RoundSummary['cutoffs']>();
    for (const cutoff of cutoffs) {
      if (cutoff.measure === 'sp-ratio') continue;
      const key = `${cutoff.suspectBelow}/${cutoff.cycleLimit}`;
      groups.set(key, [...(groups.get(key) ?? []), cutoff]);
    }
    const ct = [...groups.values()].map(
      (group) =>
        `${group.map((cutoff) => `${escapeHtml(cutoff.assayId)} positive below ${cutoff.positiveBelow}`).join(', ')}; suspect below ${group[0]!.suspectBelow}, cycle limit ${group[0]!.cycleLimit}`,
    );
    // An antibody assay reads the other way: positive at or above its S/P cutoff.
    const sp = cutoffs
      .filter((cutoff) => cutoff.measure === 'sp-ratio')
      .map(
        (cutoff) =>
          `${escapeHtml(cutoff.assayId)} positive at S/P \u2265 ${cutoff.positiveAtOrAbove}${cutoff.suspectAtOrAbove === null ? '' : `, suspect from ${cutoff.suspectAtOrAbove}`}`,
      );
    return [...ct, ...sp].join('; ');
  };
  return ` Cutoffs of the reporting lab: ${[...byLab.entries()].map(([lab, cutoffs]) => `<span data-read-with="">${escapeHtml(lab)}: ${labText(cutoffs)}</span>`).join('; ')}.`;
}

/** The busy barns' sections, then the quiet barns together, appended to the page's parts. */
function quietAndBusy(input: ClustersPageInput, assay: AssaySpatial, into: string[]): void {
  const rendered = input.site.barns.map((barn) => barnSection(input, barn, assay));
  const busy = rendered.filter((section) => !section.quiet);
  const quietIds = input.site.barns.filter((_, i) => rendered[i]!.quiet).map((barn) => barn.id);
  for (const section of busy) for (const part of section.parts) into.push(part);
  if (quietIds.length === 0) return;
  const legend = mapLegend(
    input.assays,
    [input.summaries[input.index]!],
    quietIds,
    assay.assayId,
    `${input.summaries[input.index]!.round.id}-${assay.assayId}-quiet`,
  );
  // The legend a busy barn above already gave, with the same limits, is not printed twice.
  const shown = busy.some((section) => section.legendShades === legend.shades);
  into.push('<section class="barn quiet-barns"><div class="minis">');
  for (const section of rendered) if (section.quiet) for (const part of section.parts) into.push(part);
  into.push(`</div>${shown ? '' : legend.html}</section>`);
}

/**
 * Renders the cluster review page (clusters.html) of one round.
 * @throws RangeError when `index` is not a round of the summaries
 */
export function renderClustersPage(input: ClustersPageInput): string {
  const summary = input.summaries[input.index];
  const spatial = input.spatial[input.index];
  if (!summary || !spatial)
    throw new RangeError(`\`index\` must be an integer in [0, ${input.summaries.length - 1}], got ${input.index}`);
  const spatialAlerts = input.alerts.filter((alert) =>
    ['significant-cluster', 'spread', 'new-focus', 'first-positive', 'new-positive-barn', 'positive-again'].includes(
      alert.kind,
    ),
  );
  const body: string[] = [];
  for (const assay of spatial.assays) {
    const config = input.assays.get(assay.assayId);
    const name = config?.name ?? assay.assayId;
    const site = assay.report.joinCount;
    const pcr =
      config?.measure === 'sp-ratio' && config.pairedWith !== undefined
        ? (input.assays.get(config.pairedWith)?.name ?? config.pairedWith)
        : null;
    const meaning =
      assay.measure === 'sp-ratio'
        ? `<p class="explain" data-antibody="${escapeHtml(assay.assayId)}">${escapeHtml(antibodyMeaning(name, pcr))}</p>`
        : '';
    const alerts = spatialAlerts.filter((alert) => alert.assayId === assay.assayId);
    const siteLine = site
      ? `<p>Site join count (barns as separate blocks, positives permuted within barns): BB = ${site.bb}, ${num(site.expectedBB)} expected, ${escapeHtml(formatJoinCountP(site.inference.method, site.pPermutation))}. Spread across the site: ${escapeHtml(assay.report.spread.explanation)}.</p>`
      : '';
    body.push(
      `<h2 data-assay-section="${escapeHtml(assay.assayId)}">${escapeHtml(name)}</h2>` +
        meaning +
        // What to do only: the statistics table below holds each number with its p-value.
        (alerts.length > 0
          ? `<div class="alerts"><ul>${alerts.map((alert) => `<li data-alert="${escapeHtml(alert.kind)}"><strong class="action">${escapeHtml(alert.action)}</strong></li>`).join('')}</ul></div>`
          : '') +
        siteLine +
        sequencingBlock(summary, assay.assayId),
    );
    quietAndBusy(input, assay, body);
  }
  return renderPage({
    title: `${summary.site.name}, round ${summary.round.number}: cluster review`,
    heading: `${summary.site.name}: cluster review, round ${summary.round.number}`,
    subheading: `Round ${escapeHtml(summary.round.id)} (${escapeHtml(summary.round.startOn)} to ${escapeHtml(summary.round.endOn)}). Significance level ${input.alpha}; Monte Carlo seed ${spatial.seed}. Spread model: transmission ${spatial.model.transmission} per contact and step, background ${spatial.model.background}, ${spatial.model.realisations} simulated outbreaks.${cutoffsSentence(summary)}`,
    notices: input.notices,
    nav: [
      { href: '../../index.html', label: 'All sites' },
      { href: 'summary.html', label: 'Round summary' },
      { href: '../next-round.html', label: 'Next round rope sheet' },
    ],
    body,
    herdStatus: input.herdStatus,
  });
}
