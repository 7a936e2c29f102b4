/**
 * A CSV table with a fixed, documented column list: rows give values by column name, blanks for
 * the rest. Every CSV ropewatch writes goes through here, so every cell is made safe to open in a
 * spreadsheet in one place (the JSON twins keep the raw text).
 */
import { stringify } from 'csv-stringify/sync';

export type CsvRow<C extends string> = Partial<Record<C, string | number | boolean | null>>;

/**
 * Characters that make a spreadsheet read a cell as a formula (OWASP, "CSV Injection"): equals,
 * plus, minus, at, tab (0x09) and carriage return (0x0D).
 */
const FORMULA_START = /^[=+\-@\t\r]/;
/** A plain decimal number with an optional sign and exponent (`-1.5`, `-0`, `1e-3`): read as a value, never as a formula. */
const PLAIN_NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;

/**
 * One cell as text, neutralised against formula injection: a cell that starts with a formula
 * character and is not a plain number gets a leading single quote, which spreadsheets show as
 * text (OWASP, "CSV Injection").
 */
export function csvCell(value: string | number | boolean | null | undefined): string {
  const text =
    value === null || value === undefined
      ? ''
      : typeof value === 'boolean'
        ? value
          ? 'true'
          : 'false'
        : String(value);
  return FORMULA_START.test(text) && !PLAIN_NUMBER.test(text) ? `'${text}` : text;
}

export function csvTable<C extends string>(columns: readonly C[], rows: readonly CsvRow<C>[]): string {
  return stringify(
    rows.map((row) => columns.map((column) => csvCell(row[column]))),
    // A cell holding a semicolon or a tab is quoted as well: a spreadsheet set to split on those
    // would otherwise start a new cell inside it, past the neutralised first character (OWASP,
    // "CSV Injection").
    { header: true, columns: [...columns], quoted_match: /[;\t]/ },
  );
}
