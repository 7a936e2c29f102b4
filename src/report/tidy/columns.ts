/**
 * The tidy tables' columns, declared once: the CSV header, the JSON row's zod schema (and so its
 * JSON Schema), the store view's columns and the README's column tables all follow these lists.
 * A tidy table holds one kind of observation, one row per observation, one value per cell
 * (Wickham 2014, "Tidy Data", J Stat Softw 59(10)): no lists inside cells.
 */
import { z } from 'zod';
import { CsvColumns, csvLine, type CsvValue } from '../csvTable.js';
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
 * A value as read from the store (SQLite gives 0/1 for a boolean and a double for a number) in
 * its column's kind, a number at its carried precision.
 */
function typedValue(kind: ColumnKind, value: unknown): Cell {
  if (value === null || value === undefined) return null;
  if (kind === 'boolean') return value === true || value === 1;
  if (kind === 'text') return String(value);
  return carried(Number(value));
}

/**
 * Where each column's cell is in a row of a store's view whose columns are `names`.
 * @throws RangeError naming a column the view does not give
 */
export function cellPlaces(columns: readonly Column[], names: readonly string[]): number[] {
  return columns.map(({ name }) => {
    const place = names.indexOf(name);
    if (place < 0) throw new RangeError(`the store's view gives no column \`${name}\` (it gives ${names.join(', ')})`);
    return place;
  });
}

/** A row as read from the store (its cells at `places`: cellPlaces) in the columns' order and kinds (typedValue). */
export function typedRow(columns: readonly Column[], places: readonly number[], cells: readonly unknown[]): TidyRow {
  const row: TidyRow = {};
  for (let c = 0; c < columns.length; c++) row[columns[c]!.name] = typedValue(columns[c]!.kind, cells[places[c]!]);
  return row;
}

/** A tidy cell as CSV writes it: numbers written as in the JSON (jsonText.ts); booleans and blanks as csvTable writes them. */
function csvValue(cell: Cell | undefined): CsvValue {
  return typeof cell === 'number' ? numberText(cell) : cell;
}

const TABLES = new WeakMap<readonly Column[], CsvColumns<string>>();

/** The CSV columns of a tidy column list, made once per list. */
function csvColumns(columns: readonly Column[]): CsvColumns<string> {
  let table = TABLES.get(columns);
  if (!table) {
    table = new CsvColumns(columns.map((column) => column.name));
    TABLES.set(columns, table);
  }
  return table;
}

/** A tidy table as CSV: numbers written as in the JSON (jsonText.ts), booleans `true`/`false`, null empty. */
export function tidyCsv(columns: readonly Column[], rows: readonly TidyRow[]): string {
  return csvColumns(columns).table(rows.map((row) => columns.map((column) => csvValue(row[column.name]))));
}

/**
 * Rows as read from the store (their cells at `places`: cellPlaces) as the lines tidyCsv writes
 * for their typed rows (typedRow), each ended by a line feed, without the header: no row object
 * is built on the way.
 */
export function storedRowsCsv(
  columns: readonly Column[],
  places: readonly number[],
  rows: readonly (readonly unknown[])[],
): string {
  const lines: string[] = [];
  const cells: CsvValue[] = new Array(columns.length);
  for (const row of rows) {
    for (let c = 0; c < columns.length; c++) cells[c] = csvValue(typedValue(columns[c]!.kind, row[places[c]!]));
    lines.push(`${csvLine(cells)}\n`);
  }
  return lines.join('');
}

/** A table: its file name, columns, and the columns that identify a row (no two rows share them). */
export interface TidyTable {
  readonly name: 'results' | 'rounds' | 'alerts';
  readonly file: string;
  readonly columns: readonly Column[];
  readonly key: readonly string[];
}
