/**
 * The marks and legends of the barn maps: each pen's result as a map mark (with how it was read),
 * and the cycle limits or S/P cutoffs the shading used. Reads the round summaries; no statistic.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import type { Assay } from '../../config/types.js';
import type { BarnSpatialReport } from '../../spatial/roundReview.js';
import type { PenMark } from './barnMap.js';
import {
  legendShades,
  resultsLegend,
  spLegendShades,
  spResultsLegend,
  type LegendLimit,
  type SpLegendCutoff,
} from './page.js';
import { spStep } from './palette.js';

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
 * The marks of each round, barn and assay already made, with the report they were made with: a
 * round's marks are drawn on its own page and again as a small map on the pages of the rounds
 * after it. A summary is not changed once made, so its marks stay what they were.
 */
const MARKS = new WeakMap<
  RoundSummary,
  Map<string, { report: BarnSpatialReport | undefined; marks: Map<string, PenMark> }>
>();

/**
 * The marks of one barn and assay in one round, from the summary's pens (every roped pen). An
 * antibody result is shaded by its S/P against its lab's positive cutoff; its tooltip also names
 * the paired PCR result of the pen, when the round has one. The same map is given back for the
 * same round, barn, assay and report (the maps drawn from it are kept with it: see barnMap.ts).
 */
export function resultMarks(
  summary: RoundSummary,
  barnId: string,
  assayId: string,
  report?: BarnSpatialReport,
): ReadonlyMap<string, PenMark> {
  let ofSummary = MARKS.get(summary);
  if (!ofSummary) {
    ofSummary = new Map();
    MARKS.set(summary, ofSummary);
  }
  const key = JSON.stringify([barnId, assayId]);
  const known = ofSummary.get(key);
  if (known && known.report === report) return known.marks;
  const marks = markPens(summary, barnId, assayId, report);
  ofSummary.set(key, { report, marks });
  return marks;
}

function markPens(
  summary: RoundSummary,
  barnId: string,
  assayId: string,
  report: BarnSpatialReport | undefined,
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
export function mapLegend(
  assays: ReadonlyMap<string, Assay>,
  summaries: readonly RoundSummary[],
  barnIds: readonly string[],
  assayId: string,
  key: string,
): { html: string; shades: string } {
  const assay = assays.get(assayId);
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
