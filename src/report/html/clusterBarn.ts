/**
 * One barn of the cluster review: the map of the round, the earlier rounds as small maps beside
 * it, the clusters listed, the statistics table, and a Ct or S/P trend per positive pen; a quiet
 * barn gets a small map and one line. Reads the analysis; computes no statistic.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import { EARLIER_MAPS, PEN_HISTORY_ROUNDS } from '../../analysis/summaryTypes.js';
import type { AssaySpatial, RoundSpatial } from '../../analysis/spatialRound.js';
import type { Assay, Barn, Site } from '../../config/types.js';
import type { PageAlert } from './alerts.js';
import { barnMapPieces, pushMapPieces } from './barnMap.js';
import { groupText } from '../groupText.js';
import { renderCtTrend, renderSpTrend, spTrendLegend, trendLegend, type TrendCutoff } from './charts.js';
import { statsTable } from './clusterStats.js';
import { keptFor } from '../../util/kept.js';
import { escapeHtml, safeId } from './escape.js';
import { mapLegend, resultMarks } from './mapMarks.js';
import { num } from './page.js';

/** Trend charts above which they print smaller, six to a row: a positive barn whose pens are re-roped every round keeps one series per pen. */
const MANY_TRENDS = 8;

export interface ClustersPageInput {
  site: Site;
  /** The site's herd-status block (html/herdStatus.ts), when it has one. */
  herdStatus?: string;
  summaries: readonly RoundSummary[];
  spatial: readonly (RoundSpatial | undefined)[];
  /** The round to show, an index into summaries. */
  index: number;
  assays: ReadonlyMap<string, Assay>;
  alpha: number;
  alerts: readonly PageAlert[];
  notices: readonly string[];
  /** Earlier rounds drawn as small maps (default EARLIER_MAPS). */
  earlierMaps?: number;
}

export const MAIN_SCALE = 34;
export const MINI_SCALE = 10;
export const QUIET_SCALE = 12;

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

/** What one barn section draws from: the round, the barn's spatial report and tally, and the map key. */
interface BarnView {
  input: ClustersPageInput;
  summary: RoundSummary;
  barn: Barn;
  assay: AssaySpatial;
  antibody: boolean;
  report: AssaySpatial['report']['barns'][number] | undefined;
  tally: RoundSummary['barns'][number]['assays'][number] | undefined;
  key: string;
  marks: ReturnType<typeof resultMarks>;
}

/** The group of pigs the map shows (barns run all-in/all-out), or that the barn stood empty. */
function groupOf(of: RoundSummary, barnId: string): string {
  const text = groupText(of.barns.find((entry) => entry.barnId === barnId));
  return text === '' ? '' : `, ${text}`;
}

const positivesIn = (of: RoundSummary, barnId: string, assayId: string): number =>
  of.barns.find((b) => b.barnId === barnId)?.assays.find((a) => a.assayId === assayId)?.positive ?? 0;

const roundLabel = (round: number) => `r${String(round).padStart(2, '0')}`;

type BarnSpatialReport = AssaySpatial['report']['barns'][number];

/**
 * Earlier rounds' small maps with their captions, by round, barn and assay: a round's small map
 * is the same on the page of every later round that shows it but for its id prefix (each page
 * keys its maps by its own round), so it is drawn once, as the pieces between the places the
 * prefix goes (barnMapPieces). A summary is not changed once made, nor its spatial report.
 */
const EARLIER_FIGURES = new WeakMap<
  RoundSummary,
  Map<string, { barn: Barn; report: BarnSpatialReport | undefined; pieces: readonly string[] }>
>();

/** One earlier round's small map and caption, as pieces to join with the map's id prefix. */
function earlierFigure(
  previous: RoundSummary,
  barn: Barn,
  assayId: string,
  report: BarnSpatialReport | undefined,
): readonly string[] {
  const ofRound = keptFor(EARLIER_FIGURES, previous, () => new Map());
  const key = JSON.stringify([barn.id, assayId]);
  const known = ofRound.get(key);
  if (known && known.barn === barn && known.report === report) return known.pieces;
  const svg = barnMapPieces(barn, {
    scale: MINI_SCALE,
    detail: 'mini',
    title: `${barn.name}, ${assayId}, round ${previous.round.number}`,
    results: resultMarks(previous, barn.id, assayId, report),
    clusters: (report?.clusters ?? []).filter((cluster) => cluster.size >= 2),
    attributes: { 'data-map': 'mini', 'data-assay': assayId, 'data-round': previous.round.id },
  });
  const n = positivesIn(previous, barn.id, assayId);
  // A round that did not test the assay (an antibody ELISA every other round) says so: 0 + would claim a negative round.
  const tested = previous.assays.some((entry) => entry.id === assayId);
  const pieces = [...svg];
  pieces[0] = `<figure>${pieces[0]}`;
  pieces[pieces.length - 1] +=
    `<figcaption>${roundLabel(previous.round.number)} ${escapeHtml(previous.round.startOn)}: ${tested ? `${n} +` : 'not tested'}${escapeHtml(groupOf(previous, barn.id))}</figcaption></figure>`;
  ofRound.set(key, { barn, report, pieces });
  return pieces;
}

/** The earlier rounds as small maps, oldest first, then this round, appended to a page's parts. */
function earlierMinis(view: BarnView, earlier: readonly RoundSummary[], into: string[]): void {
  const { input, barn, assay, key, marks, report } = view;
  into.push('<div class="minis" data-minis="">');
  earlier.forEach((previous, i) => {
    const previousSpatial = input.spatial[input.index - earlier.length + i]?.assays
      .find((entry) => entry.assayId === assay.assayId)
      ?.report.barns.find((entry) => entry.barn === barn.id);
    const figure = earlierFigure(previous, barn, assay.assayId, previousSpatial);
    pushMapPieces(into, figure, safeId(`${key}-mini-${previous.round.id}`));
  });
  const now = barnMapPieces(barn, {
    scale: MINI_SCALE,
    detail: 'mini',
    title: `${barn.name}, ${assay.assayId}, this round`,
    results: marks,
    clusters: (report?.clusters ?? []).filter((cluster) => cluster.size >= 2),
  });
  into.push('<figure>');
  pushMapPieces(into, now, safeId(`${key}-mini-now`));
  into.push(`<figcaption><strong>this round: ${view.tally?.positive ?? 0} +</strong></figcaption></figure></div>`);
}

/** Adds each lab to the set of the cutoff it read a point with. */
function addCutoff(into: Map<number, Set<string>>, value: number, labName: string): void {
  into.set(value, (into.get(value) ?? new Set<string>()).add(labName));
}

/** The dashed cutoff lines of one chart, lowest first, each naming its labs. */
function cutoffLines(cutoffs: Map<number, Set<string>>, prefix: string): TrendCutoff[] {
  return [...cutoffs.entries()]
    .sort((a, b) => a[0] - b[0])
    .map(([value, labs]) => ({ value, label: `${prefix}${value} (${[...labs].sort().join(', ')})` }));
}

type PenHistory = NonNullable<RoundSummary['pens'][number]['results'][string]>['history'];

/** The S/P trend of one pen: every S/P was read against its lab's positive cutoff, one dashed line per cutoff drawn. */
function spTrend(penId: string, history: PenHistory, rounds: TrendRounds, drawn: Map<number, Set<string>>): string {
  const cutoffs = new Map<number, Set<string>>();
  for (const point of history) {
    if (point.positiveAtOrAbove === null || point.sp === null || point.resultClass === 'invalid') continue;
    for (const into of [cutoffs, drawn]) addCutoff(into, point.positiveAtOrAbove, point.labName);
  }
  return renderSpTrend(
    history.map((point) => ({
      round: point.round,
      label: roundLabel(point.round),
      sp: point.sp,
      resultClass: point.resultClass,
    })),
    { title: `Pen ${penId}`, cutoffs: cutoffLines(cutoffs, 'S/P '), rounds },
  );
}

/**
 * The Ct trend of one pen, each point as its own lab read it: the axis ends at the highest cycle
 * limit among them, and the positive cutoff of each lab whose Ct is drawn is a dashed line (a
 * not-detected or invalid result was not read against a cutoff).
 */
function ctTrend(
  penId: string,
  history: PenHistory,
  resultLimit: number | null | undefined,
  cycleLimit: number,
  rounds: TrendRounds,
  drawn: Map<number, Set<string>>,
): string {
  const cutoffs = new Map<number, Set<string>>();
  for (const point of history) {
    if (point.positiveBelow === null || point.ct === null || point.resultClass === 'invalid') continue;
    for (const into of [cutoffs, drawn]) addCutoff(into, point.positiveBelow, point.labName);
  }
  const limit = Math.max(...history.map((point) => point.cycleLimit ?? cycleLimit), resultLimit ?? cycleLimit);
  return renderCtTrend(
    history.map((point) => ({
      round: point.round,
      label: roundLabel(point.round),
      ct: point.ct,
      resultClass: point.resultClass,
    })),
    { title: `Pen ${penId}`, cycleLimit: limit, cutoffs: cutoffLines(cutoffs, ''), rounds },
  );
}

type TrendRounds = { round: number; label: string }[];

/** The trend charts of the positive pens, with the legend naming the cutoffs drawn. */
function penTrends(view: BarnView): string {
  const { input, summary, barn, assay, antibody } = view;
  const positivePens = view.tally?.positivePens ?? [];
  const assayConfig = input.assays.get(assay.assayId);
  const cycleLimit = assayConfig?.measure === 'ct' ? assayConfig.cycleLimit : 40;
  const rounds = input.summaries
    .slice(Math.max(0, input.index + 1 - PEN_HISTORY_ROUNDS), input.index + 1)
    .map((s) => ({ round: s.round.number, label: roundLabel(s.round.number) }));
  const drawn = new Map<number, Set<string>>();
  const trends = positivePens
    .map((penId) => {
      const pen = summary.pens.find((entry) => entry.barnId === barn.id && entry.penId === penId);
      const result = pen?.results[assay.assayId];
      const history = result?.history ?? [];
      return antibody
        ? spTrend(penId, history, rounds, drawn)
        : ctTrend(penId, history, result?.cycleLimit, cycleLimit, rounds, drawn);
    })
    .join('');
  if (!trends) return '';
  // One cutoff is named with the page's cutoffs line; several are named here with their labs.
  const cutoffText =
    drawn.size === 1
      ? String([...drawn.keys()][0])
      : [...drawn.entries()]
          .sort((a, b) => a[0] - b[0])
          .map(([value, labs]) => `${value} (${escapeHtml([...labs].sort().join(', '))})`)
          .join('; ');
  const legend = antibody
    ? spTrendLegend('<strong>S/P trend per antibody-positive pen:</strong>', cutoffText)
    : trendLegend('<strong>Ct trend per positive pen:</strong>', cutoffText);
  return `${legend}<div class="trends${positivePens.length > MANY_TRENDS ? ' many' : ''}">${trends}</div>`;
}

/** The clusters of two pens or more, with their strength (lowest Ct, or S/P) and new pens. */
function clusterList(view: BarnView): string {
  const { assay, barn, antibody } = view;
  const strength = (cluster: { index: number; minCt: number | null }) => {
    if (!antibody) return `lowest Ct ${num(cluster.minCt, 1)}`;
    const sp = assay.clusterSp.find((entry) => entry.barnId === barn.id && entry.cluster === cluster.index);
    return `highest S/P ${num(sp?.maxSp, 2)}, mean S/P ${num(sp?.meanSp, 2)}`;
  };
  return (view.report?.clusters ?? [])
    .filter((cluster) => cluster.size >= 2)
    .map(
      (cluster) =>
        `<li>C${cluster.index}: ${escapeHtml(cluster.pens.join(', '))}; ${cluster.size} pens over ${num(cluster.alleyLength, 1)} pen units along the alley; ${strength(cluster)}${cluster.newPens.length > 0 ? `; new: ${escapeHtml(cluster.newPens.join(', '))}` : ''}</li>`,
    )
    .join('');
}

/** A quiet barn: a small map (still to scale, every pen drawn) and one line, appended to a page's parts; the page is for the barns that need review. */
function quietBarn(view: BarnView, into: string[]): void {
  const { summary, barn, assay, tally } = view;
  const small = barnMapPieces(barn, {
    scale: QUIET_SCALE,
    detail: 'mini',
    title: `${barn.name}, ${assay.assayId}, round ${summary.round.number}${groupOf(summary, barn.id)}`,
    results: view.marks,
    attributes: { 'data-map': 'main', 'data-assay': assay.assayId, 'data-round': summary.round.id },
  });
  into.push(`<figure class="quiet" data-barn="${escapeHtml(barn.id)}">`);
  pushMapPieces(into, small, safeId(`${view.key}-quiet`));
  into.push(
    `<figcaption>${escapeHtml(barn.name)} (${escapeHtml(barn.id)}): ${tally?.positive ?? 0} positive of ${tally?.tested ?? 0} tested${escapeHtml(groupOf(summary, barn.id))}; no positive, suspect or invalid rope so far.</figcaption></figure>`,
  );
}

/**
 * One barn of one assay, as the page's parts: the full section when the barn has (or had) a
 * positive, or has a suspect or invalid rope this round; otherwise the quiet figure (`quiet` says
 * which). A full section also gives the shade part of the map legend it prints (`legendShades`).
 */
export function barnSection(
  input: ClustersPageInput,
  barn: Barn,
  assay: AssaySpatial,
): { quiet: boolean; parts: string[]; legendShades?: string } {
  const summary = input.summaries[input.index]!;
  const report = assay.report.barns.find((entry) => entry.barn === barn.id);
  const tally = summary.barns
    .find((entry) => entry.barnId === barn.id)
    ?.assays.find((entry) => entry.assayId === assay.assayId);
  const key = `${summary.round.id}-${assay.assayId}-${barn.id}`;
  const marks = resultMarks(summary, barn.id, assay.assayId, report);
  const view: BarnView = {
    input,
    summary,
    barn,
    assay,
    antibody: assay.measure === 'sp-ratio',
    report,
    tally,
    key,
    marks,
  };
  const parts: string[] = [];
  const hadPositive = input.summaries.slice(0, input.index + 1).some((s) => positivesIn(s, barn.id, assay.assayId) > 0);
  const positives = tally?.positive ?? 0;
  const busy = positives > 0 || (tally?.suspect ?? 0) > 0 || (tally?.invalid ?? 0) > 0 || hadPositive;
  if (!busy) {
    quietBarn(view, parts);
    return { quiet: true, parts };
  }
  const main = barnMapPieces(barn, {
    scale: MAIN_SCALE,
    detail: 'full',
    title: `${barn.name}, ${assay.assayId}, round ${summary.round.number}${groupOf(summary, barn.id)}`,
    results: marks,
    clusters: (report?.clusters ?? []).filter((cluster) => cluster.size >= 2),
    attributes: { 'data-map': 'main', 'data-assay': assay.assayId, 'data-round': summary.round.id },
  });
  const earlier = input.summaries.slice(Math.max(0, input.index - (input.earlierMaps ?? EARLIER_MAPS)), input.index);
  const header = `<h3>${escapeHtml(barn.name)} (${escapeHtml(barn.id)}): ${positives} positive of ${tally?.tested ?? 0} tested${escapeHtml(groupOf(summary, barn.id))}</h3>`;
  const legend = mapLegend(input.assays, [...earlier, summary], [barn.id], assay.assayId, key);
  parts.push(`<section class="barn" data-barn="${escapeHtml(barn.id)}">${header}<figure>`);
  pushMapPieces(parts, main, safeId(key));
  parts.push(`</figure>${legend.html}`);
  if (earlier.length > 0) {
    parts.push('<p class="muted">Earlier rounds, oldest first (same symbols, small):</p>');
    earlierMinis(view, earlier, parts);
  }
  const clusters = clusterList(view);
  parts.push(
    (clusters ? `<ul>${clusters}</ul>` : '') +
      monitoredNote(input, barn, assay.assayId) +
      (report
        ? statsTable(
            report,
            assay.detection.find((entry) => entry.barnId === barn.id),
            input.alpha,
            view.antibody,
          )
        : '<p>No spatial statistics for this barn.</p>'),
    penTrends(view),
    `</section>`,
  );
  return { quiet: false, parts, legendShades: legend.shades };
}
