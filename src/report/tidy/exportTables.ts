/**
 * `ropewatch export`: a site's tidy tables on demand, as CSV or JSON, into a folder or as one
 * text for standard output. The rows come from the store's views (tidyTables.ts); every JSON
 * document is checked against its zod schema before it is written (src/report/schemas).
 */
import path from 'node:path';
import type { StoreFacts } from '../../domain/store.js';
import { writeFileAtomic } from '../files.js';
import { jsonText } from '../jsonText.js';
import {
  TIDY_EXPORT_SCHEMA,
  TIDY_TABLE_SCHEMAS,
  tidyExportDocument,
  tidyTableDocument,
} from '../schemas/tidySchemas.js';
import { tidyCsv, type TidyTable } from './columns.js';
import { readTidyTables, type RoundRange, TIDY_TABLES, type TidyTables } from './tidyTables.js';

export type ExportFormat = 'csv' | 'json';

export interface ExportRequest {
  siteId: string;
  format: ExportFormat;
  range: RoundRange;
  /** One table only (`results`, `rounds`, `alerts`); all three when absent. */
  table?: TidyTable['name'] | undefined;
}

const scopeOf = (request: ExportRequest) => ({
  site: request.siteId,
  from: request.range.from ?? null,
  to: request.range.to ?? null,
});

/** One table as a file's text in the requested format. */
function tableText(request: ExportRequest, table: TidyTable, tables: TidyTables): string {
  const rows = tables[table.name];
  if (request.format === 'csv') return tidyCsv(table.columns, rows);
  const document = {
    schema: TIDY_TABLE_SCHEMAS[table.name],
    ...scopeOf(request),
    columns: table.columns.map((column) => column.name),
    rows,
  };
  return jsonText(tidyTableDocument(table).parse(document));
}

const chosen = (request: ExportRequest): readonly TidyTable[] =>
  TIDY_TABLES.filter((table) => request.table === undefined || table.name === request.table);

/** The files an export writes into a folder: `<table>.csv` or `<table>.json`. */
export function exportFiles(store: StoreFacts, request: ExportRequest): { file: string; text: string }[] {
  const tables = readTidyTables(store, request.siteId, request.range);
  return chosen(request).map((table) => ({
    file: `${table.name}.${request.format}`,
    text: tableText(request, table, tables),
  }));
}

/**
 * The export as one text for standard output: one table as CSV or JSON, or the three tables in
 * one JSON document. Three CSV tables do not make one CSV: the caller asks for one.
 */
export function exportText(store: StoreFacts, request: ExportRequest): string {
  const tables = readTidyTables(store, request.siteId, request.range);
  const [only] = chosen(request);
  if (request.table !== undefined && only) return tableText(request, only, tables);
  if (request.format === 'csv') throw new RangeError('`table` must be named for CSV on standard output, got none');
  return jsonText(tidyExportDocument.parse({ schema: TIDY_EXPORT_SCHEMA, ...scopeOf(request), ...tables }));
}

/** Writes the export's files into `dir` (created when missing); returns their paths. */
export function writeExport(store: StoreFacts, request: ExportRequest, dir: string): string[] {
  return exportFiles(store, request).map(({ file, text }) => {
    const target = path.join(dir, file);
    writeFileAtomic(target, text);
    return target;
  });
}
