/**
 * summary.csv: one table with a `level` column (site, barn, pen) and one row per assay at each
 * level. Column names are stable and documented in the README; new columns go at the end.
 */
import { csvTable, type CsvRow } from './csvTable.js';
import type { RoundSummary } from '../analysis/roundSummary.js';

export const SUMMARY_COLUMNS = [
  'level',
  'site',
  'round',
  'round_start',
  'round_end',
  'barn',
  'pen',
  'side',
  'assay',
  'pens_in_use',
  'ropes_hung',
  'ropes_returned',
  'missing_sample_ids',
  'tested',
  'positive',
  'suspect',
  'negative',
  'invalid',
  'positive_pens',
  'design_infected_pens',
  'rope_sensitivity',
  'detection_confidence',
  'target_confidence',
  'ropes_needed',
  'target_reachable',
  'freedom',
  'freedom_reset',
  'apparent_prevalence',
  'apparent_prevalence_low95',
  'apparent_prevalence_high95',
  'true_prevalence',
  'sample_ids',
  'class',
  'ct',
  'load_band',
  'reason',
  'ct_history',
] as const;

type Column = (typeof SUMMARY_COLUMNS)[number];
type Row = CsvRow<Column>;

/** Probabilities to six decimals: enough to compare, short enough to read. */
export function formatProbability(value: number): string {
  return value.toFixed(6);
}

export function summaryCsv(summary: RoundSummary): string {
  const base: Row = { site: summary.site.id, round: summary.round.number, round_start: summary.round.startOn, round_end: summary.round.endOn };
  const rows: Row[] = [];
  for (const assay of summary.assays) {
    const totals = summary.barns.reduce(
      (sum, barn) => {
        const entry = barn.assays.find((a) => a.assayId === assay.id)!;
        return {
          pens: sum.pens + barn.pensInUse,
          hung: sum.hung + barn.ropesHung,
          returned: sum.returned + barn.ropesReturned,
          tested: sum.tested + entry.tested,
          positive: sum.positive + entry.positive,
          suspect: sum.suspect + entry.suspect,
          negative: sum.negative + entry.negative,
          invalid: sum.invalid + entry.invalid,
        };
      },
      { pens: 0, hung: 0, returned: 0, tested: 0, positive: 0, suspect: 0, negative: 0, invalid: 0 },
    );
    rows.push({
      ...base,
      level: 'site',
      assay: assay.id,
      pens_in_use: totals.pens,
      ropes_hung: totals.hung,
      ropes_returned: totals.returned,
      missing_sample_ids: summary.barns.flatMap((barn) => barn.missingSampleIds).join(' '),
      tested: totals.tested,
      positive: totals.positive,
      suspect: totals.suspect,
      negative: totals.negative,
      invalid: totals.invalid,
      detection_confidence: formatProbability(assay.site.detectionConfidence),
      target_confidence: summary.program.targetConfidence,
      freedom: formatProbability(assay.site.freedom),
      freedom_reset: assay.site.freedomReset,
    });
  }
  for (const barn of summary.barns) {
    for (const entry of barn.assays) {
      const c = entry.confidence;
      rows.push({
        ...base,
        level: 'barn',
        barn: barn.barnId,
        assay: entry.assayId,
        pens_in_use: barn.pensInUse,
        ropes_hung: barn.ropesHung,
        ropes_returned: barn.ropesReturned,
        missing_sample_ids: barn.missingSampleIds.join(' '),
        tested: entry.tested,
        positive: entry.positive,
        suspect: entry.suspect,
        negative: entry.negative,
        invalid: entry.invalid,
        positive_pens: entry.positivePens.join(' '),
        design_infected_pens: c.designInfected,
        rope_sensitivity: c.sensitivity,
        detection_confidence: formatProbability(c.detectionConfidence),
        target_confidence: summary.program.targetConfidence,
        ropes_needed: c.ropesNeeded,
        target_reachable: c.targetReachable,
        apparent_prevalence: c.prevalence ? formatProbability(c.prevalence.apparent) : null,
        apparent_prevalence_low95: c.prevalence ? formatProbability(c.prevalence.lower95) : null,
        apparent_prevalence_high95: c.prevalence ? formatProbability(c.prevalence.upper95) : null,
        true_prevalence: c.prevalence ? formatProbability(c.prevalence.trueEstimate) : null,
      });
    }
  }
  for (const pen of summary.pens) {
    for (const [assayId, result] of Object.entries(pen.results)) {
      rows.push({
        ...base,
        level: 'pen',
        barn: pen.barnId,
        pen: pen.penId,
        side: pen.side,
        assay: assayId,
        sample_ids: pen.sampleIds.join(' '),
        class: result.resultClass,
        ct: result.ct,
        load_band: result.loadBand,
        reason: result.reason,
        ct_history: result.history.map((point) => `r${point.round}:${point.ct ?? 'ND'}`).join(' '),
      });
    }
  }
  return csvTable(SUMMARY_COLUMNS, rows);
}
