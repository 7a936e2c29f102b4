/**
 * alerts.csv: one row per alert of the site, as the outputs show them now (the records of
 * alerts.json; the numbers behind each stay there, keyed by the same `key`).
 */
import type { AlertRecord } from '../../alerts/records.js';
import type { Column, TidyRow, TidyTable } from './columns.js';

export const ALERTS_FILE = 'alerts.csv';

export const ALERTS_COLUMNS: readonly Column[] = [
  { name: 'key', kind: 'text', required: true },
  { name: 'site', kind: 'text', required: true },
  { name: 'round', kind: 'integer', required: true },
  { name: 'round_id', kind: 'text', required: true },
  { name: 'round_start', kind: 'text', required: true },
  { name: 'round_end', kind: 'text', required: true },
  { name: 'awaiting_results', kind: 'boolean', required: true },
  { name: 'assay', kind: 'text' },
  { name: 'barn', kind: 'text' },
  { name: 'kind', kind: 'text', required: true },
  { name: 'action', kind: 'text', required: true },
  { name: 'detail', kind: 'text', required: true },
];

export const ALERTS_TABLE: TidyTable = { name: 'alerts', file: ALERTS_FILE, columns: ALERTS_COLUMNS, key: ['key'] };

export function alertRows(records: readonly AlertRecord[]): TidyRow[] {
  return records.map((record) => ({
    key: record.key,
    site: record.site.id,
    round: record.round.number,
    round_id: record.round.id,
    round_start: record.round.startOn,
    round_end: record.round.endOn,
    awaiting_results: record.awaitingResults,
    assay: record.assay,
    barn: record.barn,
    kind: record.kind,
    action: record.action,
    detail: record.detail,
  }));
}
