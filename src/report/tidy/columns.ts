/**
 * The tidy tables' columns, declared once: the CSV header, the JSON row's zod schema (and so its
 * JSON Schema), the store view's columns and the README's column tables all follow these lists.
 * A tidy table holds one kind of observation, one row per observation, one value per cell
 * (Wickham 2014, "Tidy Data", J Stat Softw 59(10)): no lists inside cells.
 */
import { z } from 'zod';
import { csvTable } from '../csvTable.js';
import { carried, numberText } from '../jsonText.js';

export type ColumnKind = 'text' | 'integer' | 'number' | 'boolean';

export interface Column {
  readonly name: string;
  readonly kind: ColumnKind;
  /** Never empty. */
  readonly required?: boolean;
}

export type Cell = string | number | boolean | null;
export type TidyRow = Record<string, Cell>;

const KIND_SCHEMA = {
  text: z.string(),
  integer: z.number().int(),
  number: z.number(),
  boolean: z.boolean(),
} as const;

/** The zod schema of one row: every column present, required columns never null. */
export function rowSchema(columns: readonly Column[]): z.ZodObject {
  return z.object(
    Object.fromEntries(
      columns.map((column) => [
        column.name,
        column.required ? KIND_SCHEMA[column.kind] : KIND_SCHEMA[column.kind].nullable(),
      ]),
    ),
  );
}

/**
 * A row as read from the store (SQLite gives 0/1 for a boolean and a double for a number) in
 * the columns' order and kinds, numbers at their carried precision.
 */
export function typedRow(columns: readonly Column[], raw: Readonly<Record<string, unknown>>): TidyRow {
  const row: TidyRow = {};
  for (const { name, kind } of columns) {
    const value = raw[name];
    if (value === null || value === undefined) row[name] = null;
    else if (kind === 'boolean') row[name] = value === true || value === 1;
    else if (kind === 'text') row[name] = String(value);
    else row[name] = carried(Number(value));
  }
  return row;
}

/** A tidy table as CSV: numbers written as in the JSON (jsonText.ts), booleans `true`/`false`, null empty. */
export function tidyCsv(columns: readonly Column[], rows: readonly TidyRow[]): string {
  const names = columns.map((column) => column.name);
  return csvTable(
    names,
    rows.map((row) =>
      Object.fromEntries(
        names.map((name) => [name, typeof row[name] === 'number' ? numberText(row[name]) : row[name]]),
      ),
    ),
  );
}

/** A table: its file name, columns, and the columns that identify a row (no two rows share them). */
export interface TidyTable {
  readonly name: 'results' | 'rounds' | 'alerts';
  readonly file: string;
  readonly columns: readonly Column[];
  readonly key: readonly string[];
}
