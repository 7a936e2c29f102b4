/**
 * summary.csv: one table with a `level` column (site, barn, pen) and one row per assay at each
 * level. Column names are stable and documented in the README; new columns go at the end. The
 * columns and shared cells are in summaryColumns.ts, the rows of each level in summaryRecords.ts.
 */
import type { RoundSummary } from '../analysis/roundSummary.js';
import type { HerdStatus } from '../config/types.js';
import { SUMMARY_TABLE } from './summaryColumns.js';
import { barnRows, penRows, siteRows } from './summaryRecords.js';

export { dateSpan, formatProbability, historyCell, spHistoryCell, SUMMARY_COLUMNS } from './summaryColumns.js';

/**
 * @param herdStatus the veterinarian's status of the herd (sites.yaml `herdStatus`): on the site
 *   rows, beside the numbers of the round
 */
export function summaryCsv(summary: RoundSummary, herdStatus?: HerdStatus): string {
  return SUMMARY_TABLE.table([...siteRows(summary, herdStatus), ...barnRows(summary), ...penRows(summary)]);
}
