/**
 * The CSV writer against csv-stringify (the node-csv project's writer, from the registry), which
 * wrote every ropewatch CSV before: the same header, quoting, doubled quotes and line ends, byte
 * for byte, on seeded random tables drawn from the characters that change how a field is written
 * (comma, quote, line feed, carriage return, semicolon, tab, the formula characters) and on the
 * edge cases by name.
 */
import { stringify } from 'csv-stringify/sync';
import { describe, expect, it } from 'vitest';
import { CsvColumns, csvCell, csvTable, type CsvRow } from '../../src/report/csvTable.js';
import { seededRng } from '../../src/util/random.js';

/** csv-stringify with the options ropewatch used: a header line, and a semicolon or tab forces quotes. */
function reference(columns: readonly string[], rows: readonly CsvRow<string>[]): string {
  return stringify(
    rows.map((row) => columns.map((column) => csvCell(row[column]))),
    { header: true, columns: [...columns], quoted_match: /[;\t]/ },
  );
}

const ALPHABET = ['a', 'Z', '7', ' ', ',', '"', '\n', '\r', ';', '\t', '=', '+', '-', '@', "'", '.', 'é', '\u2028'];

describe('csvTable', () => {
  it('writes what csv-stringify writes on 2,000 seeded random tables of hostile text, numbers, booleans and blanks', () => {
    // Oracle: csv-stringify 6 (sync API) with { header: true, columns, quoted_match: /[;\t]/ }.
    const rng = seededRng(20261203);
    const pick = <T>(items: readonly T[]) => items[Math.floor(rng() * items.length)]!;
    const value = (): string | number | boolean | null | undefined => {
      const kind = rng();
      if (kind < 0.1) return null;
      if (kind < 0.15) return undefined;
      if (kind < 0.2) return rng() < 0.5;
      if (kind < 0.35) return Math.round((rng() - 0.5) * 1e6) / 1000;
      const length = Math.floor(rng() * 6);
      return Array.from({ length }, () => pick(ALPHABET)).join('');
    };
    for (let table = 0; table < 2000; table++) {
      const columns = Array.from({ length: 1 + Math.floor(rng() * 4) }, (_, c) =>
        rng() < 0.2 ? `c${c};"x"` : `c${c}`,
      );
      const rows = Array.from({ length: Math.floor(rng() * 4) }, () =>
        Object.fromEntries(columns.map((column) => [column, value()])),
      );
      expect(csvTable(columns, rows), JSON.stringify({ columns, rows })).toBe(reference(columns, rows));
    }
  });

  it('writes the header alone, ended by a line feed, for a table without rows (as csv-stringify does)', () => {
    expect(csvTable(['a', 'b'], [])).toBe('a,b\n');
    expect(reference(['a', 'b'], [])).toBe('a,b\n');
  });

  it('quotes a field with a comma, quote, line feed, carriage return, semicolon or tab, doubling inner quotes (RFC 4180 section 2)', () => {
    // RFC 4180 section 2, rules 6 and 7; semicolon and tab: OWASP "CSV Injection".
    const cells = ['a,b', 'say "hi"', 'two\nlines', 'cr\r', 'x;y', 'x\ty', 'plain', ''];
    const row = Object.fromEntries(cells.map((cell, i) => [`c${i}`, cell]));
    const columns = cells.map((_, i) => `c${i}`);
    expect(csvTable(columns, [row]).split('\n').slice(1).join('\n')).toBe(
      '"a,b","say ""hi""","two\nlines","cr\r","x;y","x\ty",plain,\n',
    );
  });

  it('writes rows built as cells over a base row as csv-stringify writes the spread objects { ...base, ...row }', () => {
    // Oracle: csv-stringify 6 on the rows an object spread gives (ECMA-262, CopyDataProperties: a later key wins, an undefined one too).
    const rng = seededRng(20261204);
    const columns = ['a', 'b', 'c', 'd', 'e'];
    const table = new CsvColumns(columns);
    const pick = <T>(items: readonly T[]) => items[Math.floor(rng() * items.length)]!;
    const values = ['x', 'y;z', '=1', '', 0, -2.5, true, null, undefined];
    for (let trial = 0; trial < 500; trial++) {
      const partial = (): CsvRow<string> =>
        Object.fromEntries(columns.filter(() => rng() < 0.5).map((column) => [column, pick(values)]));
      const base = partial();
      const rows = Array.from({ length: 1 + Math.floor(rng() * 3) }, partial);
      const cells = rows.map((row) => table.over(table.cells(base), row));
      expect(table.table(cells), JSON.stringify({ base, rows })).toBe(
        reference(
          columns,
          rows.map((row) => ({ ...base, ...row })),
        ),
      );
    }
  });

  it('refuses a row of cells whose length is not the number of columns', () => {
    expect(() => new CsvColumns(['a', 'b']).table([['x']])).toThrow(RangeError);
  });
});
