/**
 * results.csv: one row per lab result and pen, across every round of the site: the current
 * reports and those another report took the place of (`superseded_by` names it). A pool's result
 * is its pens' result: one row per pen of the pool, `pool` naming it. The rows are read from the
 * store's `tidy_results` view; the outputs give the view each rope's pen and round (ropeRounds):
 * ropes on sheets and planned ropes whose results came back alike.
 */
import type { SiteAnalysis } from '../../analysis/analyseSite.js';
import type { RopeRound } from '../../domain/store.js';
import type { Column, TidyTable } from './columns.js';

export const RESULTS_FILE = 'results.csv';

export const RESULTS_COLUMNS: readonly Column[] = [
  { name: 'site', kind: 'text', required: true },
  { name: 'barn', kind: 'text', required: true },
  { name: 'pen', kind: 'text', required: true },
  { name: 'round', kind: 'integer', required: true },
  { name: 'round_id', kind: 'text', required: true },
  { name: 'round_start', kind: 'text', required: true },
  { name: 'group', kind: 'text' },
  { name: 'date', kind: 'text' },
  { name: 'sample_id', kind: 'text', required: true },
  { name: 'pool', kind: 'text' },
  { name: 'lab', kind: 'text', required: true },
  { name: 'case_number', kind: 'text' },
  { name: 'assay', kind: 'text', required: true },
  { name: 'measure', kind: 'text', required: true },
  { name: 'value', kind: 'number' },
  { name: 'value_as_written', kind: 'text' },
  { name: 'class', kind: 'text', required: true },
  { name: 'lab_call', kind: 'text' },
  { name: 'call_differs', kind: 'boolean', required: true },
  { name: 'reported_on', kind: 'text' },
  { name: 'superseded_by', kind: 'integer' },
  { name: 'result_id', kind: 'integer', required: true },
];

export const RESULTS_TABLE: TidyTable = {
  name: 'results',
  file: RESULTS_FILE,
  columns: RESULTS_COLUMNS,
  key: ['result_id', 'barn', 'pen'],
};

/** Every rope of the site's rounds from index `from` on, with its round (a pen's ropes, second ropes included). */
export function ropeRounds(analysis: SiteAnalysis, from = 0): RopeRound[] {
  return analysis.rounds.slice(from).flatMap((round) =>
    round.barns.flatMap((barn) =>
      barn.pens.flatMap((pen) => {
        const poolId = Object.values(pen.results).find((result) => result.pool !== undefined)?.pool?.poolId ?? null;
        return pen.sampleIds.map((sampleId) => ({
          sampleId,
          round: round.number,
          roundId: round.id,
          roundStart: round.startOn,
          groupId: barn.group?.id ?? null,
          barnId: barn.barnId,
          penId: pen.penId,
          poolId: poolId === sampleId ? null : poolId,
        }));
      }),
    ),
  );
}
