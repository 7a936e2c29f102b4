/**
 * A CSV table with a fixed, documented column list: rows give values by column name, blanks for
 * the rest. Every CSV ropewatch writes goes through here, so every cell is made safe to open in a
 * spreadsheet in one place (the JSON twins keep the raw text).
 */
export type CsvRow<C extends string> = Partial<Record<C, CsvValue>>;

/** What a cell may hold: null and undefined are blank. */
export type CsvValue = string | number | boolean | null | undefined;

/**
 * A row as its cells in the columns' order (blank where undefined or null): what a writer of
 * many rows builds, so that no row is an object of named keys to look up again column by column.
 */
export type CsvCells = readonly CsvValue[];

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
export function csvCell(value: CsvValue): string {
  // A finite number reads as a plain number: no formula, nothing to quote.
  if (typeof value === 'number' && Number.isFinite(value)) return String(value);
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

/**
 * Text that starts with a formula character (FORMULA_FIRST) or holds a character that makes a
 * field quoted (NEEDS_QUOTES): any other text is its own cell, as most text cells are (ids,
 * dates, classes), and is written after this one test.
 */
const NEUTRALISED_OR_QUOTED = /^[=+\-@\t\r]|[",\n\r;\t]/;

/** One line of cells (no line end), each neutralised (csvCell) and quoted where it must be (csvField). */
export function csvLine(cells: CsvCells): string {
  let line = '';
  for (let c = 0; c < cells.length; c++) {
    if (c > 0) line += ',';
    const value = cells[c];
    // Blanks (most cells of a wide table) add nothing; a finite number, a boolean and plain text
    // have nothing to neutralise or quote.
    if (value === null || value === undefined) continue;
    if (typeof value === 'string') line += NEUTRALISED_OR_QUOTED.test(value) ? csvField(csvCell(value)) : value;
    else if (typeof value === 'number' && Number.isFinite(value)) line += String(value);
    else if (typeof value === 'boolean') line += value ? 'true' : 'false';
    else line += csvField(csvCell(value));
  }
  return line;
}

/**
 * A column list that builds rows as cells: `cells` for a row given by name, `over` for a row that
 * starts from a base row (the cells every row of a table shares) and sets the columns it names.
 * Rows are built this way rather than as `{ ...base, ... }` objects: V8 builds an object literal
 * that starts with a spread and goes on with some thirty keys about a hundred times slower than
 * the same literal alone, and a recompute writes hundreds of thousands of rows.
 */
export class CsvColumns<C extends string> {
  /** Each column's place in a row of cells. */
  readonly place: Readonly<Record<C, number>>;

  constructor(readonly names: readonly C[]) {
    const place = {} as Record<C, number>;
    names.forEach((name, index) => {
      place[name] = index;
    });
    this.place = place;
  }

  /** The row's cells in the columns' order, blank where it names no value. */
  cells(row: CsvRow<C>): CsvValue[] {
    const cells: CsvValue[] = new Array(this.names.length);
    for (let c = 0; c < this.names.length; c++) cells[c] = row[this.names[c]!];
    return cells;
  }

  /**
   * A copy of `base` with each column `row` names set to its value (a key present but undefined
   * blanks the cell, as a later key of a spread would).
   */
  over(base: CsvCells, row: CsvRow<C>): CsvValue[] {
    const cells = base.slice();
    for (const name in row) cells[this.place[name]] = row[name];
    return cells;
  }

  /** The table of these columns (csvCellTable). */
  table(rows: readonly CsvCells[]): string {
    return csvCellTable(this.names, rows);
  }
}

/** The table from rows of cells in the columns' order: the header line, then one line per row, each ended by a line feed. */
export function csvCellTable(columns: readonly string[], rows: readonly CsvCells[]): string {
  const lines: string[] = [columns.map(csvField).join(',')];
  for (const row of rows) {
    if (row.length !== columns.length)
      throw new RangeError(`a row must have ${columns.length} cells, one per column, got ${row.length}`);
    lines.push(csvLine(row));
  }
  // One flat string: a file written from a long chain of `+=` costs more to flatten when written than this join.
  return `${lines.join('\n')}\n`;
}

/** The table: a header line of the column names, then one line per row, each ended by a line feed. */
export function csvTable<C extends string>(columns: readonly C[], rows: readonly CsvRow<C>[]): string {
  const table = new CsvColumns(columns);
  return table.table(rows.map((row) => table.cells(row)));
}
