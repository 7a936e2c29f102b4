/**
 * The record reader against an outside oracle: csv-parse (the npm package, with `relax_quotes`
 * and `relax_column_count`, the options ingest used before it had a reader of its own) must
 * give the same records for any text, however the text is cut into chunks; where csv-parse
 * refuses (a quote never closed), the reader refuses too. Record start lines are checked
 * against a count made from the oracle's records: a record starts one line after the previous
 * record's start plus the line breaks inside that record's fields (RFC 4180, section 2.6).
 */
import { parse } from 'csv-parse/sync';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  CsvRecordReader,
  MAX_RECORD_CHARS,
  RecordTooLongError,
  UnclosedQuoteError,
  type CsvRecord,
} from '../../src/ingest/csvRecords.js';

const SEED = 20261202;

/** Reads `text` in chunks of the given sizes (cycled). */
function readInChunks(text: string, delimiter: string, skipLines: number, sizes: readonly number[]): CsvRecord[] {
  const reader = new CsvRecordReader(delimiter, skipLines);
  const out: CsvRecord[] = [];
  let at = 0;
  let i = 0;
  while (at < text.length) {
    const size = Math.max(1, sizes[i++ % sizes.length]!);
    reader.push(text.slice(at, at + size), out);
    at += size;
  }
  reader.end(out);
  return out;
}

type Oracle = { records: string[][] } | { unclosed: true };

function oracle(text: string, delimiter: string): Oracle {
  try {
    return {
      records: parse(text, {
        delimiter,
        relax_quotes: true,
        relax_column_count: true,
        skip_empty_lines: false,
      }) as string[][],
    };
  } catch (error) {
    expect((error as { code?: string }).code).toBe('CSV_QUOTE_NOT_CLOSED');
    return { unclosed: true };
  }
}

/** Start lines of the oracle's records, counted from their contents. */
function startLines(records: readonly string[][], first: number): number[] {
  const lines: number[] = [];
  let line = first;
  for (const cells of records) {
    lines.push(line);
    line += 1 + cells.reduce((sum, cell) => sum + (cell.match(/\n/g)?.length ?? 0), 0);
  }
  return lines;
}

const csvText = (delimiter: string) =>
  fc.string({ unit: fc.constantFrom('a', 'b', ' ', delimiter, '"', '"', '\n', 'é', ','), maxLength: 80 });

describe('CsvRecordReader against csv-parse', () => {
  for (const delimiter of [',', ';', '\t', '|']) {
    it(`gives csv-parse's records and refusals for any text, in any chunking (delimiter ${JSON.stringify(delimiter)})`, () => {
      fc.assert(
        fc.property(
          csvText(delimiter),
          fc.array(fc.integer({ min: 1, max: 9 }), { minLength: 1, maxLength: 4 }),
          (text, sizes) => {
            const expected = oracle(text, delimiter);
            if ('unclosed' in expected) {
              expect(() => readInChunks(text, delimiter, 0, sizes)).toThrow(UnclosedQuoteError);
              return;
            }
            const read = readInChunks(text, delimiter, 0, sizes);
            expect(read.map((record) => record.cells)).toEqual(expected.records);
            expect(read.map((record) => record.line)).toEqual(startLines(expected.records, 1));
          },
        ),
        { seed: SEED, numRuns: 3000 },
      );
    });
  }

  it('skips title and header lines and numbers records from the line after them', () => {
    fc.assert(
      fc.property(
        fc.array(fc.string({ unit: fc.constantFrom('x', ',', ' ', '"'), maxLength: 10 }), {
          minLength: 1,
          maxLength: 3,
        }),
        csvText(','),
        fc.array(fc.integer({ min: 1, max: 7 }), { minLength: 1, maxLength: 3 }),
        (titles, body, sizes) => {
          const expected = oracle(body, ',');
          fc.pre('records' in expected);
          if (!('records' in expected)) return;
          const read = readInChunks(titles.map((title) => `${title}\n`).join('') + body, ',', titles.length, sizes);
          expect(read.map((record) => record.cells)).toEqual(expected.records);
          expect(read.map((record) => record.line)).toEqual(startLines(expected.records, titles.length + 1));
        },
      ),
      { seed: SEED, numRuns: 1000 },
    );
  });

  it('names the line where an unclosed quoted field opens', () => {
    // By hand: record 1 on line 1, record 2 opens a quote on line 2 that runs to the end.
    expect(() => readInChunks('a,b\nc,"d\ne\nf', ',', 0, [3])).toThrow(expect.objectContaining({ line: 2 }));
  });

  it('reads a field far longer than a chunk in linear time (a 3.9 million character quoted field in 1 KB chunks)', () => {
    const big = 'x'.repeat(3_900_000);
    const read = readInChunks(`id,note\n1,"${big}"\n2,ok\n`, ',', 1, [1024]);
    expect(read.map((record) => [record.cells[0], record.cells[1]!.length, record.line])).toEqual([
      ['1', 3_900_000, 2],
      ['2', 2, 3],
    ]);
  });

  it('refuses a record longer than MAX_RECORD_CHARS, naming the line it starts on, before holding it all', () => {
    // A quote opened on line 3 and never closed: the rest of a large file would become one field.
    const reader = new CsvRecordReader(',', 1);
    const out: CsvRecord[] = [];
    reader.push('id,note\n1,ok\n2,"never closed\n', out);
    const line = 'y'.repeat(999) + '\n';
    let thrown: unknown;
    let fed = 0;
    try {
      while (fed < 2 * MAX_RECORD_CHARS) {
        reader.push(line.repeat(64), out);
        fed += 64_000;
      }
    } catch (error) {
      thrown = error;
    }
    expect(thrown).toBeInstanceOf(RecordTooLongError);
    expect((thrown as RecordTooLongError).line).toBe(3);
    // Refused within one chunk of the limit, not at the end of the text.
    expect(fed).toBeLessThanOrEqual(MAX_RECORD_CHARS + 64_000);
    expect(out.map((record) => record.line)).toEqual([2]);
  });

  it('refuses a delimiter that is not one plain character', () => {
    expect(() => new CsvRecordReader('"', 0)).toThrow(RangeError);
    expect(() => new CsvRecordReader(',,', 0)).toThrow(RangeError);
  });
});
