/**
 * Cluster review, for the herd veterinarian: per assay and barn a map from the real layout
 * (load shading, positives outlined, clusters boxed), the earlier rounds as small maps beside it,
 * the spatial statistics with their p-values and a one-line reading of each, and a Ct trend
 * per positive pen. Reads the analysis; computes no statistic.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import { antibodyMeaning } from '../summaryNotices.js';
import type { AssaySpatial, RoundSpatial } from '../../analysis/spatialRound.js';
import type { Assay, Barn, Site } from '../../config/types.js';
import type { BarnSpatialReport } from '../../spatial/roundReview.js';
import type { PageAlert } from './alerts.js';
import { renderBarnMap, type PenMark } from './barnMap.js';
import { groupText } from '../groupText.js';
import { renderCtTrend, renderSpTrend, spTrendLegend, trendLegend, type TrendCutoff } from './charts.js';
import { escapeHtml } from './escape.js';
import {
  count,
  legendShades,
  num,
  pct,
  pValue,
  renderPage,
  resultsLegend,
  spLegendShades,
  spResultsLegend,
  type LegendLimit,
  type SpLegendCutoff,
} from './page.js';
import { spStep } from './palette.js';

/** Trend charts above which they print smaller, six to a row: a positive barn whose pens are re-roped every round keeps one series per pen. */
const MANY_TRENDS = 8;

export interface ClustersPageInput {
  site: Site;
  /** The site's herd-status block (html/herdStatus.ts), when it has one. */
  herdStatus?: string;
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

type ReadResult = {
  labName: string;
  measure?: 'ct' | 'sp-ratio';
  positiveBelow: number | null;
  suspectBelow: number | null;
  cycleLimit: number | null;
  positiveAtOrAbove?: number | null;
  suspectAtOrAbove?: number | null;
};

/**
 * How a pen's result was read: the lab, and its cutoffs for the assay ("Northfield: positive
 * below 36, cycle limit 40"; for an antibody assay "Northfield: positive at S/P ≥ 0.4").
 */
export function readingNote(result: ReadResult): string {
  if (result.measure === 'sp-ratio') {
    const suspect =
      result.suspectAtOrAbove === null || result.suspectAtOrAbove === undefined
        ? ''
        : `, suspect from ${result.suspectAtOrAbove}`;
    return `${result.labName}: positive at S/P \u2265 ${result.positiveAtOrAbove ?? 'n/a'}${suspect}`;
  }
  const cut = result.positiveBelow === null ? '' : `positive below ${result.positiveBelow}, `;
  return `${result.labName}: ${cut}cycle limit ${result.cycleLimit ?? 'n/a'}`;
}

type PenResult = RoundSummary['pens'][number]['results'][string];

/** A result's value in words: "Ct 28.1", "not detected", "S/P 0.52" or "invalid, retest". */
export function valueText(result: Pick<PenResult, 'resultClass' | 'measure' | 'ct' | 'sp'>): string {
  if (result.resultClass === 'invalid') return 'invalid, retest';
  if (result.measure === 'sp-ratio') return result.sp === null ? 'no S/P' : `S/P ${result.sp}`;
  return result.ct === null ? 'not detected' : `Ct ${result.ct}`;
}

/**
 * The marks of one barn and assay in one round, from the summary's pens (every roped pen). An
 * antibody result is shaded by its S/P against its lab's positive cutoff; its tooltip also names
 * the paired PCR result of the pen, when the round has one.
 */
export function resultMarks(
  summary: RoundSummary,
  barnId: string,
  assayId: string,
  report?: BarnSpatialReport,
): Map<string, PenMark> {
  const newPositive = new Set((report?.pens ?? []).filter((pen) => pen.newPositive).map((pen) => pen.id));
  const pcr = summary.pairs?.find((pair) => pair.antibody === assayId)?.pcr;
  const marks = new Map<string, PenMark>();
  for (const pen of summary.pens) {
    if (pen.barnId !== barnId) continue;
    const result = pen.results[assayId];
    if (!result) {
      if (!pen.returned) marks.set(pen.penId, { resultClass: 'missing', load: 0, note: 'rope hung, no result' });
      continue;
    }
    const paired = pcr === undefined ? undefined : pen.results[pcr];
    const pairNote =
      pcr === undefined ? '' : `; ${pcr}: ${paired ? `${valueText(paired)} (${paired.resultClass})` : 'not tested'}`;
    const shade =
      result.measure === 'sp-ratio'
        ? result.resultClass === 'invalid' || result.sp === null || result.positiveAtOrAbove === null
          ? 0
          : spStep(result.sp, result.positiveAtOrAbove)
        : undefined;
    marks.set(pen.penId, {
      resultClass: result.resultClass,
      load: result.load,
      ...(shade !== undefined ? { shade } : {}),
      newPositive: newPositive.has(pen.penId),
      note: `${valueText(result)} (${readingNote(result)})${pairNote}`,
    });
  }
  // Ropes planned for the round (or hung) with no result: their pens are marked, not left blank.
  const barn = summary.barns.find((entry) => entry.barnId === barnId);
  const mistyped = new Set((barn?.mistyped ?? []).map((rope) => rope.sampleId));
  for (const [sampleId, penId] of Object.entries(barn?.missingPens ?? {})) {
    if (marks.has(penId)) continue;
    marks.set(penId, {
      resultClass: 'missing',
      load: 0,
      note: mistyped.has(sampleId)
        ? `rope ${sampleId}: result refused under a mistyped ID`
        : `rope ${sampleId} planned, no result`,
    });
  }
  return marks;
}

/** The positive S/P cutoffs the shading of a barn's antibody maps used, each with its labs; the assay's default when none is drawn. */
export function legendSpCutoffs(
  summaries: readonly RoundSummary[],
  barnIds: readonly string[],
  assayId: string,
  fallback: number,
): SpLegendCutoff[] {
  const byCutoff = new Map<number, Set<string>>();
  for (const summary of summaries) {
    for (const pen of summary.pens) {
      const result = barnIds.includes(pen.barnId) ? pen.results[assayId] : undefined;
      if (!result || result.positiveAtOrAbove === null) continue;
      const labs = byCutoff.get(result.positiveAtOrAbove) ?? new Set<string>();
      labs.add(result.labName);
      byCutoff.set(result.positiveAtOrAbove, labs);
    }
  }
  if (byCutoff.size === 0) return [{ positiveAtOrAbove: fallback, labs: [] }];
  return [...byCutoff.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([positiveAtOrAbove, labs]) => ({ positiveAtOrAbove, labs: [...labs].sort() }));
}

/** The map legend of an assay's barns: load by Ct, or S/P for an antibody assay. */
function mapLegend(
  input: ClustersPageInput,
  summaries: readonly RoundSummary[],
  barnIds: readonly string[],
  assayId: string,
  key: string,
): { html: string; shades: string } {
  const assay = input.assays.get(assayId);
  if (assay?.measure === 'sp-ratio') {
    const cutoffs = legendSpCutoffs(summaries, barnIds, assayId, assay.positiveAtOrAbove);
    return { html: spResultsLegend(key, cutoffs), shades: spLegendShades(cutoffs) };
  }
  const limits = legendLimits(summaries, barnIds, assayId, assay?.cycleLimit ?? 40);
  return { html: resultsLegend(key, limits), shades: legendShades(limits) };
}

/**
 * The cycle limits the shading of a barn's maps used (this round and the earlier ones drawn),
 * each with the labs read at it; the assay's default when no result is drawn.
 */
export function legendLimits(
  summaries: readonly RoundSummary[],
  barnIds: readonly string[],
  assayId: string,
  fallback: number,
): LegendLimit[] {
  const byLimit = new Map<number, Set<string>>();
  for (const summary of summaries) {
    for (const pen of summary.pens) {
      const result = barnIds.includes(pen.barnId) ? pen.results[assayId] : undefined;
      if (!result || result.cycleLimit === null) continue;
      const labs = byLimit.get(result.cycleLimit) ?? new Set<string>();
      labs.add(result.labName);
      byLimit.set(result.cycleLimit, labs);
    }
  }
  if (byLimit.size === 0) return [{ cycleLimit: fallback, labs: [] }];
  return [...byLimit.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([cycleLimit, labs]) => ({ cycleLimit, labs: [...labs].sort() }));
}

function statsTable(
  report: BarnSpatialReport,
  detection: AssaySpatial['detection'][number] | undefined,
  alpha: number,
  antibody = false,
): string {
  const rows: string[] = [];
  const jc = report.joinCount;
  if (jc) {
    const method =
      jc.inference.method === 'exact'
        ? `exact p (all ${jc.inference.placements} placements)`
        : `permutation p (${jc.inference.permutations} permutations)`;
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
          ? antibody
            ? 'Ropes with a high S/P sit near other ropes with a high S/P.'
            : 'Ropes with a high load sit near other ropes with a high load.'
          : antibody
            ? 'No spatial pattern in S/P beyond chance.'
            : 'No spatial pattern in load beyond chance.';
    rows.push(
      `<tr><td>Moran\u2019s I on ${antibody ? 'S/P' : 'load'}</td><td>I = ${num(moran.I, 3)} (expected ${num(moran.expected, 3)}); permutation p = <strong>${pValue(moran.pPermutation)}</strong>` +
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
  rows.push(
    `<tr><td>Spread pattern</td><td>${escapeHtml(report.spread.pattern)}</td><td>${escapeHtml(report.spread.explanation)}</td></tr>`,
  );
  if (detection) {
    const spread =
      detection.spreadModel === null ? 'n/a' : `${pct(detection.spreadModel)} (\u00b1 ${pct(detection.spreadModelSE)})`;
    const reading =
      detection.spreadModel === null || detection.randomRopes === null
        ? 'The spread model was not run for this barn.'
        : `Under pen-to-pen spread the ropes hung find an outbreak at the design prevalence ${pct(detection.spreadModel)} of the time; the same number of ropes at random would ${pct(detection.randomRopes)}.`;
    rows.push(
      `<tr><td>Detection of the ropes hung</td><td>hypergeometric ${pct(detection.hypergeometric)}; spread model ${spread}; random ropes ${pct(detection.randomRopes)}</td><td>${reading}</td></tr>`,
    );
  }
  const notes = [
    ...report.notes.filter((note) => note !== 'spread-model detection not requested'),
    ...report.excluded.map((entry) => `${entry.id} left out: ${entry.reason}`),
  ];
  return (
    `<table class="stats" data-stats=""><thead><tr><th>Statistic</th><th>Value</th><th>Reading</th></tr></thead><tbody>${rows.join('')}</tbody></table>` +
    `<p class="muted">Weights: ${escapeHtml(report.weights.description)}. ${notes.length > 0 ? escapeHtml(notes.join('; ')) + '.' : ''}</p>`
  );
}

/**
 * A barn positive after the round before is monitored: this round's ropes went to its positive
 * pens, around them and to a fixed tracking set, not by the layout alone. Join counts, Moran's I
 * and the scan compare the positives with chance over the roped pens; with ropes chosen for
 * being positive they describe the pattern but do not test it (a selection bias), so the page
 * says so beside them.
 */
function monitoredNote(input: ClustersPageInput, barn: Barn, assayId: string): string {
  const before = input.summaries[input.index - 1];
  const status = before?.barns
    .find((entry) => entry.barnId === barn.id)
    ?.assays.find((entry) => entry.assayId === assayId)?.confidence.status;
  if (status?.state !== 'positive') return '';
  return (
    `<p class="explain" data-monitored="">Monitored barn (positive since round ${status.sinceRound}): this round's ropes went to the positive pens, around them and to a fixed tracking set, ` +
    'not where the layout alone would put them. The statistics below describe the pattern of these ropes; their p-values do not test clustering against chance placement.</p>'
  );
}

function barnSection(input: ClustersPageInput, barn: Barn, assay: AssaySpatial): string {
  const summary = input.summaries[input.index]!;
  const assayConfig = input.assays.get(assay.assayId);
  const antibody = assay.measure === 'sp-ratio';
  const cycleLimit = assayConfig?.measure === 'ct' ? assayConfig.cycleLimit : 40;
  const report = assay.report.barns.find((entry) => entry.barn === barn.id);
  const tally = summary.barns
    .find((entry) => entry.barnId === barn.id)
    ?.assays.find((entry) => entry.assayId === assay.assayId);
  const key = `${summary.round.id}-${assay.assayId}-${barn.id}`;
  // The group of pigs the map shows (barns run all-in/all-out), or that the barn stood empty.
  const groupOf = (of: RoundSummary) => {
    const text = groupText(of.barns.find((entry) => entry.barnId === barn.id));
    return text === '' ? '' : `, ${text}`;
  };
  const marks = resultMarks(summary, barn.id, assay.assayId, report);
  const positives = tally?.positive ?? 0;
  const main = renderBarnMap(barn, {
    key,
    scale: MAIN_SCALE,
    detail: 'full',
    title: `${barn.name}, ${assay.assayId}, round ${summary.round.number}${groupOf(summary)}`,
    results: marks,
    clusters: (report?.clusters ?? []).filter((cluster) => cluster.size >= 2),
    attributes: { 'data-map': 'main', 'data-assay': assay.assayId, 'data-round': summary.round.id },
  });
  const earlierCount = input.earlierMaps ?? 5;
  const earlier = input.summaries.slice(Math.max(0, input.index - earlierCount), input.index);
  const hadPositive = input.summaries
    .slice(0, input.index + 1)
    .some(
      (s) =>
        (s.barns.find((b) => b.barnId === barn.id)?.assays.find((a) => a.assayId === assay.assayId)?.positive ?? 0) > 0,
    );
  const busy = positives > 0 || (tally?.suspect ?? 0) > 0 || (tally?.invalid ?? 0) > 0 || hadPositive;
  const minis =
    busy && earlier.length > 0
      ? `<div class="minis" data-minis="">${earlier
          .map((previous, i) => {
            const previousSpatial = input.spatial[input.index - earlier.length + i]?.assays
              .find((entry) => entry.assayId === assay.assayId)
              ?.report.barns.find((entry) => entry.barn === barn.id);
            const svg = renderBarnMap(barn, {
              key: `${key}-mini-${previous.round.id}`,
              scale: MINI_SCALE,
              detail: 'mini',
              title: `${barn.name}, ${assay.assayId}, round ${previous.round.number}`,
              results: resultMarks(previous, barn.id, assay.assayId, previousSpatial),
              clusters: (previousSpatial?.clusters ?? []).filter((cluster) => cluster.size >= 2),
              attributes: { 'data-map': 'mini', 'data-assay': assay.assayId, 'data-round': previous.round.id },
            });
            const n =
              previous.barns.find((b) => b.barnId === barn.id)?.assays.find((a) => a.assayId === assay.assayId)
                ?.positive ?? 0;
            // A round that did not test the assay (an antibody ELISA every other round) says so: 0 + would claim a negative round.
            const tested = previous.assays.some((entry) => entry.id === assay.assayId);
            return `<figure>${svg}<figcaption>r${String(previous.round.number).padStart(2, '0')} ${escapeHtml(previous.round.startOn)}: ${tested ? `${n} +` : 'not tested'}${escapeHtml(groupOf(previous))}</figcaption></figure>`;
          })
          .join(
            '',
          )}<figure>${renderBarnMap(barn, { key: `${key}-mini-now`, scale: MINI_SCALE, detail: 'mini', title: `${barn.name}, ${assay.assayId}, this round`, results: marks, clusters: (report?.clusters ?? []).filter((cluster) => cluster.size >= 2) })}<figcaption><strong>this round: ${positives} +</strong></figcaption></figure></div>`
      : '';
  const positivePens = tally?.positivePens ?? [];
  const rounds = input.summaries
    .slice(0, input.index + 1)
    .map((s) => ({ round: s.round.number, label: `r${String(s.round.number).padStart(2, '0')}` }));
  const cutoffsDrawn = new Map<number, Set<string>>();
  const trends = positivePens
    .map((penId) => {
      const pen = summary.pens.find((entry) => entry.barnId === barn.id && entry.penId === penId);
      const result = pen?.results[assay.assayId];
      const history = result?.history ?? [];
      if (antibody) {
        // Every S/P was read against its lab's positive cutoff: one dashed line per cutoff drawn.
        const cutoffs = new Map<number, Set<string>>();
        for (const point of history) {
          if (point.positiveAtOrAbove === null || point.sp === null || point.resultClass === 'invalid') continue;
          for (const into of [cutoffs, cutoffsDrawn])
            into.set(
              point.positiveAtOrAbove,
              (into.get(point.positiveAtOrAbove) ?? new Set<string>()).add(point.labName),
            );
        }
        const lines: TrendCutoff[] = [...cutoffs.entries()]
          .sort((a, b) => a[0] - b[0])
          .map(([value, labs]) => ({ value, label: `S/P ${value} (${[...labs].sort().join(', ')})` }));
        return renderSpTrend(
          history.map((point) => ({
            round: point.round,
            label: `r${String(point.round).padStart(2, '0')}`,
            sp: point.sp,
            resultClass: point.resultClass,
          })),
          { title: `Pen ${penId}`, cutoffs: lines, rounds },
        );
      }
      // Each point as its own lab read it: the axis ends at the highest cycle limit among them,
      // and the positive cutoff of each lab whose Ct is drawn is a dashed line (a not-detected or
      // invalid result was not read against a cutoff).
      const cutoffs = new Map<number, Set<string>>();
      for (const point of history) {
        if (point.positiveBelow === null || point.ct === null || point.resultClass === 'invalid') continue;
        const labs = cutoffs.get(point.positiveBelow) ?? new Set<string>();
        labs.add(point.labName);
        cutoffs.set(point.positiveBelow, labs);
        const drawn = cutoffsDrawn.get(point.positiveBelow) ?? new Set<string>();
        drawn.add(point.labName);
        cutoffsDrawn.set(point.positiveBelow, drawn);
      }
      const lines: TrendCutoff[] = [...cutoffs.entries()]
        .sort((a, b) => a[0] - b[0])
        .map(([value, labs]) => ({ value, label: `${value} (${[...labs].sort().join(', ')})` }));
      const limit = Math.max(
        ...history.map((point) => point.cycleLimit ?? cycleLimit),
        result?.cycleLimit ?? cycleLimit,
      );
      return renderCtTrend(
        history.map((point) => ({
          round: point.round,
          label: `r${String(point.round).padStart(2, '0')}`,
          ct: point.ct,
          resultClass: point.resultClass,
        })),
        { title: `Pen ${penId}`, cycleLimit: limit, cutoffs: lines, rounds },
      );
    })
    .join('');
  // One cutoff is named with the page's cutoffs line; several are named here with their labs.
  const cutoffText =
    cutoffsDrawn.size === 1
      ? String([...cutoffsDrawn.keys()][0])
      : [...cutoffsDrawn.entries()]
          .sort((a, b) => a[0] - b[0])
          .map(([value, labs]) => `${value} (${escapeHtml([...labs].sort().join(', '))})`)
          .join('; ');
  const strength = (cluster: { index: number; minCt: number | null }) => {
    if (!antibody) return `lowest Ct ${num(cluster.minCt, 1)}`;
    const sp = assay.clusterSp.find((entry) => entry.barnId === barn.id && entry.cluster === cluster.index);
    return `highest S/P ${num(sp?.maxSp, 2)}, mean S/P ${num(sp?.meanSp, 2)}`;
  };
  const clusterList = (report?.clusters ?? [])
    .filter((cluster) => cluster.size >= 2)
    .map(
      (cluster) =>
        `<li>C${cluster.index}: ${escapeHtml(cluster.pens.join(', '))}; ${cluster.size} pens over ${num(cluster.alleyLength, 1)} pen units along the alley; ${strength(cluster)}${cluster.newPens.length > 0 ? `; new: ${escapeHtml(cluster.newPens.join(', '))}` : ''}</li>`,
    )
    .join('');
  const header = `<h3>${escapeHtml(barn.name)} (${escapeHtml(barn.id)}): ${positives} positive of ${tally?.tested ?? 0} tested${escapeHtml(groupOf(summary))}</h3>`;
  if (!busy) {
    // A quiet barn gets a small map (still to scale, every pen drawn) and one line: the page is for the barns that need review.
    const small = renderBarnMap(barn, {
      key: `${key}-quiet`,
      scale: QUIET_SCALE,
      detail: 'mini',
      title: `${barn.name}, ${assay.assayId}, round ${summary.round.number}${groupOf(summary)}`,
      results: marks,
      attributes: { 'data-map': 'main', 'data-assay': assay.assayId, 'data-round': summary.round.id },
    });
    return `<figure class="quiet" data-barn="${escapeHtml(barn.id)}">${small}<figcaption>${escapeHtml(barn.name)} (${escapeHtml(barn.id)}): ${positives} positive of ${tally?.tested ?? 0} tested${escapeHtml(groupOf(summary))}; no positive, suspect or invalid rope so far.</figcaption></figure>`;
  }
  return (
    `<section class="barn" data-barn="${escapeHtml(barn.id)}">${header}<figure>${main}</figure>${mapLegend(input, [...earlier, summary], [barn.id], assay.assayId, key).html}` +
    (minis ? `<p class="muted">Earlier rounds, oldest first (same symbols, small):</p>${minis}` : '') +
    (clusterList ? `<ul>${clusterList}</ul>` : '') +
    monitoredNote(input, barn, assay.assayId) +
    (report
      ? statsTable(
          report,
          assay.detection.find((entry) => entry.barnId === barn.id),
          input.alpha,
          antibody,
        )
      : '<p>No spatial statistics for this barn.</p>') +
    (trends
      ? `${antibody ? spTrendLegend('<strong>S/P trend per antibody-positive pen:</strong>', cutoffText) : trendLegend('<strong>Ct trend per positive pen:</strong>', cutoffText)}<div class="trends${positivePens.length > MANY_TRENDS ? ' many' : ''}">${trends}</div>`
      : '') +
    `</section>`
  );
}

/**
 * The sequencing candidates of one assay: positive pens below the assay's `sequencingBelow`,
 * with the plain reading; nothing when the assay has no threshold or the round no positive.
 */
export function sequencingBlock(summary: RoundSummary, assayId: string): string {
  const entry = summary.sequencing.find((candidate) => candidate.assayId === assayId);
  const positives = summary.barns.reduce(
    (sum, barn) => sum + (barn.assays.find((a) => a.assayId === assayId)?.positive ?? 0),
    0,
  );
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

function quietAndBusy(input: ClustersPageInput, assay: AssaySpatial): string {
  const rendered = input.site.barns.map((barn) => barnSection(input, barn, assay));
  const quiet = rendered.filter((html) => html.startsWith('<figure class="quiet"'));
  const busy = rendered.filter((html) => !html.startsWith('<figure class="quiet"'));
  const quietIds = input.site.barns
    .filter((_, i) => rendered[i]!.startsWith('<figure class="quiet"'))
    .map((barn) => barn.id);
  const legend = mapLegend(
    input,
    [input.summaries[input.index]!],
    quietIds,
    assay.assayId,
    `${input.summaries[input.index]!.round.id}-${assay.assayId}-quiet`,
  );
  // The legend a busy barn above already gave, with the same limits, is not printed twice.
  const shown = busy.some((html) => html.includes(legend.shades));
  const quietBlock =
    quiet.length > 0
      ? `<section class="barn quiet-barns"><div class="minis">${quiet.join('')}</div>${shown ? '' : legend.html}</section>`
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
  if (!summary || !spatial)
    throw new RangeError(`\`index\` must be an integer in [0, ${input.summaries.length - 1}], got ${input.index}`);
  const spatialAlerts = input.alerts.filter((alert) =>
    ['significant-cluster', 'spread', 'new-focus', 'first-positive', 'new-positive-barn', 'positive-again'].includes(
      alert.kind,
    ),
  );
  const sections = spatial.assays
    .map((assay) => {
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
        ? `<p>Site join count (barns as separate blocks, positives permuted within barns): BB = ${site.bb}, ${num(site.expectedBB)} expected, ${site.inference.method === 'exact' ? 'exact' : 'permutation'} p = ${pValue(site.pPermutation)}. Spread across the site: ${escapeHtml(assay.report.spread.explanation)}.</p>`
        : '';
      return (
        `<h2 data-assay-section="${escapeHtml(assay.assayId)}">${escapeHtml(name)}</h2>` +
        meaning +
        // What to do only: the statistics table below holds each number with its p-value.
        (alerts.length > 0
          ? `<div class="alerts"><ul>${alerts.map((alert) => `<li data-alert="${escapeHtml(alert.kind)}"><strong class="action">${escapeHtml(alert.action)}</strong></li>`).join('')}</ul></div>`
          : '') +
        siteLine +
        sequencingBlock(summary, assay.assayId) +
        quietAndBusy(input, assay)
      );
    })
    .join('');
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
    body: sections,
    herdStatus: input.herdStatus,
  });
}
