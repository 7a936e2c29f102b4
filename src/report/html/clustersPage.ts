/**
 * Cluster review, for the herd veterinarian: per assay and barn a map from the real layout
 * (load shading, positives outlined, clusters boxed), the earlier rounds as small maps beside it,
 * the spatial statistics with their p-values and a one-line reading of each, and a Ct trend
 * per positive pen. Reads the analysis; computes no statistic.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import type { AssaySpatial, RoundSpatial } from '../../analysis/spatialRound.js';
import type { Assay, Barn, Site } from '../../config/types.js';
import type { BarnSpatialReport } from '../../spatial/analyse.js';
import type { PageAlert } from './alerts.js';
import { renderBarnMap, type PenMark } from './barnMap.js';
import { renderCtTrend } from './charts.js';
import { escapeHtml } from './escape.js';
import { count, num, pct, pValue, renderPage, resultsLegend } from './page.js';

export interface ClustersPageInput {
  site: Site;
  summaries: readonly RoundSummary[];
  spatial: readonly RoundSpatial[];
  /** The round to show, an index into summaries. */
  index: number;
  assays: ReadonlyMap<string, Assay>;
  alpha: number;
  alerts: readonly PageAlert[];
  notices: readonly string[];
  /** Earlier rounds drawn as small maps (default 5). */
  earlierMaps?: number;
}

export const MAIN_SCALE = 34;
export const MINI_SCALE = 10;
export const QUIET_SCALE = 12;

/** The marks of one barn and assay in one round, from the summary's pens (every roped pen). */
export function resultMarks(summary: RoundSummary, barnId: string, assayId: string, report?: BarnSpatialReport): Map<string, PenMark> {
  const newPositive = new Set((report?.pens ?? []).filter((pen) => pen.newPositive).map((pen) => pen.id));
  const marks = new Map<string, PenMark>();
  for (const pen of summary.pens) {
    if (pen.barnId !== barnId) continue;
    const result = pen.results[assayId];
    if (!result) {
      if (!pen.returned) marks.set(pen.penId, { resultClass: 'missing', load: 0, note: 'rope hung, no result' });
      continue;
    }
    marks.set(pen.penId, {
      resultClass: result.resultClass,
      load: result.load,
      newPositive: newPositive.has(pen.penId),
      note: result.ct === null ? 'not detected' : `Ct ${result.ct}`,
    });
  }
  return marks;
}

function statsTable(report: BarnSpatialReport, detection: AssaySpatial['detection'][number] | undefined, alpha: number): string {
  const rows: string[] = [];
  const jc = report.joinCount;
  if (jc) {
    const method = jc.inference.method === 'exact' ? `exact p (all ${jc.inference.placements} placements)` : `permutation p (${jc.inference.permutations} permutations)`;
    const reading =
      report.positives < 2
        ? 'Fewer than 2 positives: adjacency cannot be judged.'
        : jc.pPermutation <= alpha
          ? 'Positive ropes sit next to each other more than chance allows.'
          : 'Positive ropes are no more often neighbours than chance would place them.';
    rows.push(
      `<tr><td>Join count (positive\u2013positive neighbours)</td><td>BB = ${jc.bb} of ${jc.joins} joins, ${num(jc.expectedBB)} expected; ${method} = <strong>${pValue(jc.pPermutation)}</strong>` +
        `${jc.zBB !== null ? `; z = ${num(jc.zBB)} (shown for reference)` : ''}</td><td>${reading}</td></tr>`,
    );
  }
  const moran = report.moran;
  if (moran) {
    const reading =
      moran.I === null
        ? escapeHtml(moran.reason ?? 'Undefined for these values.')
        : moran.pPermutation !== null && moran.pPermutation <= alpha
          ? 'Ropes with a high load sit near other ropes with a high load.'
          : 'No spatial pattern in load beyond chance.';
    rows.push(
      `<tr><td>Moran\u2019s I on load</td><td>I = ${num(moran.I, 3)} (expected ${num(moran.expected, 3)}); permutation p = <strong>${pValue(moran.pPermutation)}</strong>` +
        `${moran.zRandomisation !== null ? `; z = ${num(moran.zRandomisation)} (shown for reference)` : ''}</td><td>${reading}</td></tr>`,
    );
  }
  const scan = report.scan;
  if (scan) {
    const best = scan.mostLikely;
    rows.push(
      best
        ? `<tr><td>Scan statistic, most likely cluster</td><td>${count(best.pens.length, 'rope')} around ${escapeHtml(best.centre)} (radius ${num(best.radius, 1)} pen units): ${best.positives} positive, ${num(best.expected)} expected; p = <strong>${pValue(best.p)}</strong></td>` +
          `<td>${best.p <= alpha ? `A group of ropes holds more positives than chance: ${escapeHtml(best.pens.join(', '))}.` : 'No group of ropes holds more positives than chance would give.'}</td></tr>`
        : `<tr><td>Scan statistic</td><td>no window with more positives than expected</td><td>Nothing to scan for.</td></tr>`,
    );
  }
  rows.push(`<tr><td>Spread pattern</td><td>${escapeHtml(report.spread.pattern)}</td><td>${escapeHtml(report.spread.explanation)}</td></tr>`);
  if (detection) {
    const spread = detection.spreadModel === null ? 'n/a' : `${pct(detection.spreadModel)} (\u00b1 ${pct(detection.spreadModelSE)})`;
    const reading =
      detection.spreadModel === null || detection.randomRopes === null
        ? 'The spread model was not run for this barn.'
        : `Under pen-to-pen spread the ropes hung find an outbreak at the design prevalence ${pct(detection.spreadModel)} of the time; the same number of ropes at random would ${pct(detection.randomRopes)}.`;
    rows.push(`<tr><td>Detection of the ropes hung</td><td>hypergeometric ${pct(detection.hypergeometric)}; spread model ${spread}; random ropes ${pct(detection.randomRopes)}</td><td>${reading}</td></tr>`);
  }
  const notes = [...report.notes.filter((note) => note !== 'spread-model detection not requested'), ...report.excluded.map((entry) => `${entry.id} left out: ${entry.reason}`)];
  return (
    `<table class="stats" data-stats=""><thead><tr><th>Statistic</th><th>Value</th><th>Reading</th></tr></thead><tbody>${rows.join('')}</tbody></table>` +
    `<p class="muted">Weights: ${escapeHtml(report.weights.description)}. ${notes.length > 0 ? escapeHtml(notes.join('; ')) + '.' : ''}</p>`
  );
}

function barnSection(input: ClustersPageInput, barn: Barn, assay: AssaySpatial): string {
  const summary = input.summaries[input.index]!;
  const assayConfig = input.assays.get(assay.assayId);
  const cycleLimit = assayConfig?.cycleLimit ?? 40;
  const report = assay.report.barns.find((entry) => entry.barn === barn.id);
  const tally = summary.barns.find((entry) => entry.barnId === barn.id)?.assays.find((entry) => entry.assayId === assay.assayId);
  const key = `${summary.round.id}-${assay.assayId}-${barn.id}`;
  const marks = resultMarks(summary, barn.id, assay.assayId, report);
  const positives = tally?.positive ?? 0;
  const main = renderBarnMap(barn, {
    key,
    scale: MAIN_SCALE,
    detail: 'full',
    title: `${barn.name}, ${assay.assayId}, round ${summary.round.number}`,
    results: marks,
    clusters: (report?.clusters ?? []).filter((cluster) => cluster.size >= 2),
    attributes: { 'data-map': 'main', 'data-assay': assay.assayId, 'data-round': summary.round.id },
  });
  const earlierCount = input.earlierMaps ?? 5;
  const earlier = input.summaries.slice(Math.max(0, input.index - earlierCount), input.index);
  const hadPositive = input.summaries.slice(0, input.index + 1).some((s) => (s.barns.find((b) => b.barnId === barn.id)?.assays.find((a) => a.assayId === assay.assayId)?.positive ?? 0) > 0);
  const busy = positives > 0 || (tally?.suspect ?? 0) > 0 || (tally?.invalid ?? 0) > 0 || hadPositive;
  const minis = busy && earlier.length > 0
    ? `<div class="minis" data-minis="">${earlier
        .map((previous, i) => {
          const previousSpatial = input.spatial[input.index - earlier.length + i]?.assays.find((entry) => entry.assayId === assay.assayId)?.report.barns.find((entry) => entry.barn === barn.id);
          const svg = renderBarnMap(barn, {
            key: `${key}-mini-${previous.round.id}`,
            scale: MINI_SCALE,
            detail: 'mini',
            title: `${barn.name}, ${assay.assayId}, round ${previous.round.number}`,
            results: resultMarks(previous, barn.id, assay.assayId, previousSpatial),
            clusters: (previousSpatial?.clusters ?? []).filter((cluster) => cluster.size >= 2),
            attributes: { 'data-map': 'mini', 'data-assay': assay.assayId, 'data-round': previous.round.id },
          });
          const n = previous.barns.find((b) => b.barnId === barn.id)?.assays.find((a) => a.assayId === assay.assayId)?.positive ?? 0;
          return `<figure>${svg}<figcaption>r${String(previous.round.number).padStart(2, '0')} ${escapeHtml(previous.round.startOn)}: ${n} +</figcaption></figure>`;
        })
        .join('')}<figure>${renderBarnMap(barn, { key: `${key}-mini-now`, scale: MINI_SCALE, detail: 'mini', title: `${barn.name}, ${assay.assayId}, this round`, results: marks, clusters: (report?.clusters ?? []).filter((cluster) => cluster.size >= 2) })}<figcaption><strong>this round: ${positives} +</strong></figcaption></figure></div>`
    : '';
  const positivePens = tally?.positivePens ?? [];
  const rounds = input.summaries.slice(0, input.index + 1).map((s) => ({ round: s.round.number, label: `r${String(s.round.number).padStart(2, '0')}` }));
  const trends = positivePens
    .map((penId) => {
      const pen = summary.pens.find((entry) => entry.barnId === barn.id && entry.penId === penId);
      const history = pen?.results[assay.assayId]?.history ?? [];
      return renderCtTrend(
        history.map((point) => ({ round: point.round, label: `r${String(point.round).padStart(2, '0')}`, ct: point.ct, resultClass: point.resultClass })),
        { title: `Pen ${penId}`, cycleLimit, positiveBelow: assayConfig?.positiveBelow ?? null, rounds },
      );
    })
    .join('');
  const clusterList = (report?.clusters ?? [])
    .filter((cluster) => cluster.size >= 2)
    .map((cluster) => `<li>C${cluster.index}: ${escapeHtml(cluster.pens.join(', '))}; ${cluster.size} pens over ${num(cluster.alleyLength, 1)} pen units along the alley; lowest Ct ${num(cluster.minCt, 1)}${cluster.newPens.length > 0 ? `; new: ${escapeHtml(cluster.newPens.join(', '))}` : ''}</li>`)
    .join('');
  const header = `<h3>${escapeHtml(barn.name)} (${escapeHtml(barn.id)}): ${positives} positive of ${tally?.tested ?? 0} tested</h3>`;
  if (!busy) {
    // A quiet barn gets a small map (still to scale, every pen drawn) and one line: the page is for the barns that need review.
    const small = renderBarnMap(barn, {
      key: `${key}-quiet`,
      scale: QUIET_SCALE,
      detail: 'mini',
      title: `${barn.name}, ${assay.assayId}, round ${summary.round.number}`,
      results: marks,
      attributes: { 'data-map': 'main', 'data-assay': assay.assayId, 'data-round': summary.round.id },
    });
    return `<figure class="quiet" data-barn="${escapeHtml(barn.id)}">${small}<figcaption>${escapeHtml(barn.name)} (${escapeHtml(barn.id)}): ${positives} positive of ${tally?.tested ?? 0} tested; no positive, suspect or invalid rope so far.</figcaption></figure>`;
  }
  return (
    `<section class="barn" data-barn="${escapeHtml(barn.id)}">${header}<figure>${main}</figure>${resultsLegend(key, cycleLimit)}` +
    (minis ? `<p class="muted">Earlier rounds, oldest first (same symbols, small):</p>${minis}` : '') +
    (clusterList ? `<ul>${clusterList}</ul>` : '') +
    (report ? statsTable(report, assay.detection.find((entry) => entry.barnId === barn.id), input.alpha) : '<p>No spatial statistics for this barn.</p>') +
    (trends ? `<p><strong>Ct trend per positive pen</strong> (lower Ct = more virus, drawn higher; dashed line: positive cutoff ${assayConfig?.positiveBelow ?? ''}):</p><div class="trends">${trends}</div>` : '') +
    `</section>`
  );
}

function quietAndBusy(input: ClustersPageInput, assay: AssaySpatial): string {
  const rendered = input.site.barns.map((barn) => barnSection(input, barn, assay));
  const quiet = rendered.filter((html) => html.startsWith('<figure class="quiet"'));
  const busy = rendered.filter((html) => !html.startsWith('<figure class="quiet"'));
  const cycleLimit = input.assays.get(assay.assayId)?.cycleLimit ?? 40;
  const quietBlock =
    quiet.length > 0
      ? `<section class="barn quiet-barns"><div class="minis">${quiet.join('')}</div>${resultsLegend(`${input.summaries[input.index]!.round.id}-${assay.assayId}-quiet`, cycleLimit)}</section>`
      : '';
  return busy.join('') + quietBlock;
}

/**
 * Renders the cluster review page (clusters.html) of one round.
 * @throws RangeError when `index` is not a round of the summaries
 */
export function renderClustersPage(input: ClustersPageInput): string {
  const summary = input.summaries[input.index];
  const spatial = input.spatial[input.index];
  if (!summary || !spatial) throw new RangeError(`\`index\` must be an integer in [0, ${input.summaries.length - 1}], got ${input.index}`);
  const spatialAlerts = input.alerts.filter((alert) => ['significant-cluster', 'spread', 'new-focus', 'first-positive', 'new-positive-barn'].includes(alert.kind));
  const sections = spatial.assays
    .map((assay) => {
      const name = input.assays.get(assay.assayId)?.name ?? assay.assayId;
      const site = assay.report.joinCount;
      const alerts = spatialAlerts.filter((alert) => alert.assayId === assay.assayId);
      const siteLine = site
        ? `<p>Site join count (barns as separate blocks, positives permuted within barns): BB = ${site.bb}, ${num(site.expectedBB)} expected, ${site.inference.method === 'exact' ? 'exact' : 'permutation'} p = ${pValue(site.pPermutation)}. Spread across the site: ${escapeHtml(assay.report.spread.explanation)}.</p>`
        : '';
      return (
        `<h2 data-assay-section="${escapeHtml(assay.assayId)}">${escapeHtml(name)}</h2>` +
        (alerts.length > 0 ? `<div class="alerts"><ul>${alerts.map((alert) => `<li>${escapeHtml(alert.message)}</li>`).join('')}</ul></div>` : '') +
        siteLine +
        quietAndBusy(input, assay)
      );
    })
    .join('');
  return renderPage({
    title: `${summary.site.name}, round ${summary.round.number}: cluster review`,
    heading: `${summary.site.name}: cluster review, round ${summary.round.number}`,
    subheading: `Round ${escapeHtml(summary.round.id)} (${escapeHtml(summary.round.startOn)} to ${escapeHtml(summary.round.endOn)}). Significance level ${input.alpha}; Monte Carlo seed ${spatial.seed}. Spread model: transmission ${spatial.model.transmission} per contact and step, background ${spatial.model.background}, ${spatial.model.realisations} simulated outbreaks.`,
    notices: input.notices,
    nav: [
      { href: '../../index.html', label: 'All sites' },
      { href: 'summary.html', label: 'Round summary' },
      { href: '../next-round.html', label: 'Next round rope sheet' },
    ],
    body: sections,
  });
}
