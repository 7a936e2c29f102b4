/**
 * The columns of summary.csv and the cells that more than one level shares: probabilities,
 * dates, history points, where the results came from, and results refused under a mistyped ID.
 * Column names are stable and documented in the README; new columns go at the end.
 */
import { CsvColumns, type CsvRow, type CsvValue } from './csvTable.js';
import type { SourceSummary } from '../analysis/roundSummary.js';
import type { CtHistoryPoint, MistypedRope } from '../rounds/roundModel.js';
import { refusalGroups } from './roundNotes.js';

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
  'lab_call',
  'call_differs',
  'lab',
  'accession',
  'collected_on',
  'reported_on',
  'positive_below',
  'suspect_below',
  'cycle_limit',
  'sequencing_candidate',
  'measure',
  'sp',
  'sp_history',
  'positive_at_or_above',
  'suspect_at_or_above',
  'corrections',
  'refused_mistyped_id',
  'likely_meant_id',
  'round_state',
  'results_due_on',
  'site_barns',
  'infected_barns',
  'detection_if_every_barn',
  'detection_if_infected_barns',
  'positive_since',
  'group',
  'group_placed_on',
  'barn_empty',
  'barn_freedom',
  'pool',
  'pools',
  'positive_pool_pens',
  'pool_sensitivity',
  'unpooled_detection_confidence',
  'herd_status',
  'herd_status_set_on',
  'herd_status_note',
] as const;

type Column = (typeof SUMMARY_COLUMNS)[number];
/** One row of summary.csv. */
export type SummaryRow = CsvRow<Column>;
type Row = SummaryRow;
/** One row of summary.csv as its cells in the columns' order. */
export type SummaryCells = CsvValue[];
/** The columns of summary.csv, building rows as cells. */
export const SUMMARY_TABLE = new CsvColumns(SUMMARY_COLUMNS);

/** Probabilities to six decimals: enough to compare, short enough to read. */
export function formatProbability(value: number): string {
  return value.toFixed(6);
}

/**
 * Dates as one cell: the date when first and last agree, else an ISO 8601 time interval
 * "first/last" (ISO 8601-1:2019, time intervals); empty when none is known.
 */
export function dateSpan(first: string | null, last: string | null): string | null {
  if (first === null || last === null) return first ?? last;
  return first === last ? first : `${first}/${last}`;
}

/** One point of a pen's history: its Ct, `ND` for not detected, `invalid` for a result that says nothing. */
export function historyCell(point: Pick<CtHistoryPoint, 'round' | 'ct' | 'resultClass'>): string {
  return `r${point.round}:${point.resultClass === 'invalid' ? 'invalid' : (point.ct ?? 'ND')}`;
}

/** One point of an antibody pen's history: its S/P, `invalid` for a result that says nothing (an S/P has no "not detected"). */
export function spHistoryCell(point: Pick<CtHistoryPoint, 'round' | 'sp' | 'resultClass'>): string {
  return `r${point.round}:${point.resultClass === 'invalid' || point.sp === null ? 'invalid' : point.sp}`;
}

/** The provenance cells of a site or barn row: labs, case numbers, collection and report dates of the reports behind it. */
export function provenance(
  sources: readonly Pick<
    SourceSummary,
    'labName' | 'accessions' | 'reportedOn' | 'collectedFrom' | 'collectedTo' | 'assays'
  >[],
  assayId: string,
): Row {
  const of = sources.filter((source) => source.assays.includes(assayId));
  if (of.length === 0) return {};
  const sorted = (values: Iterable<string>) => [...new Set(values)].sort();
  const collected = sorted(
    of.flatMap((source) => [source.collectedFrom, source.collectedTo].filter((date): date is string => date !== null)),
  );
  const reported = sorted(of.flatMap((source) => (source.reportedOn === null ? [] : [source.reportedOn])));
  return {
    lab: sorted(of.map((source) => source.labName)).join('; '),
    accession: sorted(of.flatMap((source) => source.accessions)).join(' '),
    collected_on: dateSpan(collected[0] ?? null, collected.at(-1) ?? null),
    reported_on: dateSpan(reported[0] ?? null, reported.at(-1) ?? null),
  };
}

/**
 * The refused rows of some ropes as two aligned cells: each distinct ID as written, and the
 * planned ID it most likely meant at the same place in the other cell.
 */
export function mistypedCells(ropes: readonly MistypedRope[]): Row {
  if (ropes.length === 0) return {};
  const pairs = ropes.flatMap((rope) =>
    [...new Set(refusalGroups(rope).map((group) => group.written))].map((written) => ({
      written,
      meant: rope.sampleId,
    })),
  );
  return {
    refused_mistyped_id: pairs.map((pair) => pair.written).join(' '),
    likely_meant_id: pairs.map((pair) => pair.meant).join(' '),
  };
}
