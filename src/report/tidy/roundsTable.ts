/**
 * rounds.csv: one row per barn, round and assay of the site (a round still awaiting results:
 * one row per barn with an empty assay): ropes hung, returned and tested, pens by class, and what
 * the round proved there by each model, beside the target and the barn's probability of freedom.
 */
import type { SiteAnalysis } from '../../analysis/analyseSite.js';
import type { Column, TidyRow, TidyTable } from './columns.js';

export const ROUNDS_FILE = 'rounds.csv';

export const ROUNDS_COLUMNS: readonly Column[] = [
  { name: 'site', kind: 'text', required: true },
  { name: 'barn', kind: 'text', required: true },
  { name: 'round', kind: 'integer', required: true },
  { name: 'round_id', kind: 'text', required: true },
  { name: 'round_start', kind: 'text', required: true },
  { name: 'round_end', kind: 'text', required: true },
  { name: 'round_state', kind: 'text', required: true },
  { name: 'group', kind: 'text' },
  { name: 'barn_empty', kind: 'boolean', required: true },
  { name: 'assay', kind: 'text' },
  { name: 'measure', kind: 'text' },
  { name: 'pens_in_use', kind: 'integer', required: true },
  { name: 'ropes_hung', kind: 'integer', required: true },
  { name: 'ropes_returned', kind: 'integer', required: true },
  { name: 'ropes_missing', kind: 'integer', required: true },
  { name: 'tested', kind: 'integer' },
  { name: 'positive', kind: 'integer' },
  { name: 'suspect', kind: 'integer' },
  { name: 'negative', kind: 'integer' },
  { name: 'invalid', kind: 'integer' },
  { name: 'design_infected_pens', kind: 'integer' },
  { name: 'rope_sensitivity', kind: 'number' },
  { name: 'detection_hypergeometric', kind: 'number' },
  { name: 'detection_spread_model', kind: 'number' },
  { name: 'detection_spread_model_se', kind: 'number' },
  { name: 'target_confidence', kind: 'number', required: true },
  { name: 'ropes_needed', kind: 'integer' },
  { name: 'barn_positive', kind: 'boolean' },
  { name: 'positive_since', kind: 'integer' },
  { name: 'barn_freedom', kind: 'number' },
  { name: 'prior_freedom', kind: 'number' },
];

export const ROUNDS_TABLE: TidyTable = {
  name: 'rounds',
  file: ROUNDS_FILE,
  columns: ROUNDS_COLUMNS,
  key: ['site', 'barn', 'round', 'assay'],
};

/** The rows of the site's rounds from index `from` on, in round, barn and assay order. */
export function roundRows(analysis: SiteAnalysis, from = 0): TidyRow[] {
  const target = analysis.site.program.targetConfidence;
  return analysis.summaries.slice(from).flatMap((summary, offset) => {
    const index = from + offset;
    const spatial = analysis.spatial[index];
    return summary.barns.flatMap((barn) => {
      // Each row starts from a fresh copy of the barn's cells: assigning onto it keeps the keys in
      // this order, at a fraction of the cost of an object literal that starts with a spread.
      const common = (): TidyRow => ({
        site: summary.site.id,
        barn: barn.barnId,
        round: summary.round.number,
        round_id: summary.round.id,
        round_start: summary.round.startOn,
        round_end: summary.round.endOn,
        round_state: summary.round.state,
        group: barn.group?.id ?? null,
        barn_empty: barn.empty,
        pens_in_use: barn.pensInUse,
        ropes_hung: barn.ropesHung,
        ropes_returned: barn.ropesReturned,
        ropes_missing: barn.missingSampleIds.length,
        target_confidence: target,
      });
      if (barn.assays.length === 0) return [Object.assign(common(), { assay: null, measure: null })];
      return barn.assays.map((assay): TidyRow => {
        const figure = spatial?.assays
          .find((entry) => entry.assayId === assay.assayId)
          ?.detection.find((entry) => entry.barnId === barn.barnId);
        const { confidence } = assay;
        const status = confidence.status;
        return Object.assign(common(), {
          assay: assay.assayId,
          measure: confidence.measure,
          tested: assay.tested,
          positive: assay.positive,
          suspect: assay.suspect,
          negative: assay.negative,
          invalid: assay.invalid,
          design_infected_pens: confidence.designInfected,
          rope_sensitivity: confidence.sensitivity,
          // An empty barn's figures are 0 and stand for no figure (BarnConfidence.empty).
          detection_hypergeometric: barn.empty ? null : confidence.detectionConfidence,
          detection_spread_model: barn.empty ? null : (figure?.spreadModel ?? null),
          detection_spread_model_se: barn.empty ? null : (figure?.spreadModelSE ?? null),
          ropes_needed: confidence.ropesNeeded,
          barn_positive: status === null ? null : status.state === 'positive',
          positive_since: status?.state === 'positive' ? status.sinceRound : null,
          barn_freedom: confidence.freedom,
          prior_freedom: confidence.priorFreedom,
        });
      });
    });
  });
}
