/**
 * The JSON shapes of the tidy tables (`ropewatch export --format json`): one document per table,
 * or the three together. The row schemas follow the tables' column lists (columns.ts), so the
 * CSV header, the JSON rows and their JSON Schema cannot drift apart.
 */
import { z } from 'zod';
import { ALERTS_TABLE } from '../tidy/alertsTable.js';
import { rowSchema, type TidyTable } from '../tidy/columns.js';
import { RESULTS_TABLE } from '../tidy/resultsTable.js';
import { ROUNDS_TABLE } from '../tidy/roundsTable.js';

export const TIDY_EXPORT_SCHEMA = 'ropewatch.tidy-export/1';
export const TIDY_TABLE_SCHEMAS = {
  results: 'ropewatch.tidy-results/1',
  rounds: 'ropewatch.tidy-rounds/1',
  alerts: 'ropewatch.tidy-alerts/1',
} as const;

const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/);

/** The export's scope: the site and the range of the rounds' first days (null: open). */
const scope = {
  site: z.string(),
  from: isoDate.nullable(),
  to: isoDate.nullable(),
};

export function tidyTableDocument(table: TidyTable) {
  return z.object({
    schema: z.literal(TIDY_TABLE_SCHEMAS[table.name]),
    ...scope,
    columns: z.array(z.string()),
    rows: z.array(rowSchema(table.columns)),
  });
}

export const tidyResultsDocument = tidyTableDocument(RESULTS_TABLE);
export const tidyRoundsDocument = tidyTableDocument(ROUNDS_TABLE);
export const tidyAlertsDocument = tidyTableDocument(ALERTS_TABLE);

export const tidyExportDocument = z.object({
  schema: z.literal(TIDY_EXPORT_SCHEMA),
  ...scope,
  results: z.array(rowSchema(RESULTS_TABLE.columns)),
  rounds: z.array(rowSchema(ROUNDS_TABLE.columns)),
  alerts: z.array(rowSchema(ALERTS_TABLE.columns)),
});
