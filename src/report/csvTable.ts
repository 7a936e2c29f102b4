/**
 * A CSV table with a fixed, documented column list: rows give values by column name, blanks for
 * the rest. Every CSV ropewatch writes goes through here, so every cell is made safe to open in a
 * spreadsheet in one place (the JSON twins keep the raw text).
 */
export type CsvRow<C extends string> = Partial<Record<C, string | number | boolean | null>>;

/**
 * Characters that make a spreadsheet read a cell as a formula (OWASP, "CSV Injection"): equals,
 * plus, minus, at, tab (0x09) and carriage return (0x0D), as character codes.
 */
const FORMULA_FIRST = new Set([0x3d, 0x2b, 0x2d, 0x40, 0x09, 0x0d]);
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
  if (text === '' || !FORMULA_FIRST.has(text.charCodeAt(0))) return text;
  return PLAIN_NUMBER.test(text) ? text : `'${text}`;
}

/**
 * A field as RFC 4180 writes it: quoted (inner quotes doubled) when it holds a comma, a quote, a
 * line feed or a carriage return, and also when it holds a semicolon or a tab: a spreadsheet set
 * to split on those would otherwise start a new cell inside it, past the neutralised first
 * character (OWASP, "CSV Injection"). These are the rules csv-stringify applies with
 * `quoted_match: /[;\t]/` (the test checks the two agree byte for byte); written out here because
 * a recompute writes hundreds of thousands of cells and the general writer costs several times
 * this loop.
 * @see RFC 4180 (2005), Common Format and MIME Type for Comma-Separated Values (CSV) Files, section 2.
 */
const NEEDS_QUOTES = /[",\n\r;\t]/;
const QUOTES = /"/g;

function csvField(text: string): string {
  if (!NEEDS_QUOTES.test(text)) return text;
  return `"${text.replace(QUOTES, '""')}"`;
}

/** The table: a header line of the column names, then one line per row, each ended by a line feed. */
export function csvTable<C extends string>(columns: readonly C[], rows: readonly CsvRow<C>[]): string {
  const lines: string[] = [columns.map(csvField).join(',')];
  for (const row of rows) {
    let line = '';
    for (let c = 0; c < columns.length; c++) {
      if (c > 0) line += ',';
      line += csvField(csvCell(row[columns[c]!]));
    }
    lines.push(line);
  }
  return `${lines.join('\n')}\n`;
}
