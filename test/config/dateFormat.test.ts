/**
 * Date formats are checked when the configuration loads: a format date-fns refuses, or one
 * that cannot carry a whole date, is refused with the file and key instead of failing (or
 * misreading) at ingest.
 */
import { format as formatDate } from 'date-fns/format';
import { parse as parseDate } from 'date-fns/parse';
import { describe, expect, it } from 'vitest';
import { dateFormatProblem } from '../../src/config/dateFormat.js';
import { parseDateCell } from '../../src/ingest/recordCells.js';
import { configCases, configError } from './configCases.js';

const { configEdited } = configCases();

describe('dateFormatProblem', () => {
  it('refuses D and Y tokens, which date-fns itself refuses, and suggests the calendar tokens', () => {
    // date-fns throws a RangeError for D, DD, YY and YYYY unless told to accept them (date-fns
    // docs, "Unicode tokens": use d for the day of the month and y for the year).
    expect(() => formatDate(new Date(2026, 7, 5), 'DD.MM.YYYY')).toThrow(RangeError);
    expect(() => parseDate('05.08.2026', 'DD.MM.YYYY', new Date(2000, 0, 1))).toThrow(RangeError);
    expect(dateFormatProblem('DD.MM.YYYY')).toContain('use dd.MM.yyyy');
    // Lengths date-fns only warns about read the wrong day just the same.
    expect(dateFormatProblem('D.M.YYYY')).toContain('use d.M.yyyy');
    expect(dateFormatProblem('yyyy-MM-DD')).toContain('use yyyy-MM-dd');
    expect(dateFormatProblem('YYYYMMdd')).toContain('use yyyyMMdd');
    // Letters inside quotes are literal text (UTS #35), not tokens.
    expect(dateFormatProblem("dd.MM.yyyy 'Day'")).toBeUndefined();
  });

  it('refuses formats that lose the year, the month or the day of a date', () => {
    expect(dateFormatProblem('dd.MM')).toContain('does not carry a whole date');
    expect(dateFormatProblem('MM.yyyy')).toContain('does not carry a whole date');
    // mm is minutes (UTS #35 field symbols): every month would read as the reference month.
    expect(dateFormatProblem('dd.mm.yyyy')).toContain('reads back as 2031-01-27');
    // No separator and no padding: 1 November 2031 is written 1112031, which could as well be
    // 11 January 2031 (date-fns reads 11, 12, 031).
    expect(dateFormatProblem('dMyyyy')).toContain('2031-11-01 is written "1112031" and reads back as 0031-12-11');
    expect(dateFormatProblem('dd.MM.yyyy n')).toContain('is not a date-fns format');
  });

  it('accepts the formats labs write (common practice, no source), including the ones the code uses itself', () => {
    for (const format of [
      'yyyy-MM-dd',
      'dd.MM.yyyy',
      'd.M.yyyy',
      'MM/dd/yyyy',
      'd/M/yy',
      'dd-MMM-yyyy',
      'yyyyMMdd',
      'dd.MM.yyyy HH:mm',
    ]) {
      expect(dateFormatProblem(format), format).toBeUndefined();
    }
    // What a format that passes reads at ingest (hand-checked).
    expect(parseDateCell('27-Nov-2031', 'dd-MMM-yyyy')).toBe('2031-11-27');
    expect(parseDateCell('3/2/97', 'd/M/yy')).toBe('1997-02-03');
  });
});

describe('date formats at load', () => {
  it('refuses DD.MM.YYYY at format.dateFormat of the lab file, suggesting dd.MM.yyyy', () => {
    const error = configError(configEdited('labs/ostermark.yaml', (lab) => (lab.format.dateFormat = 'DD.MM.YYYY')));
    expect(error.file.endsWith('ostermark.yaml')).toBe(true);
    expect(error.keyPath).toBe('format.dateFormat');
    expect(error.message).toMatch(/labs[/\\]ostermark\.yaml at format\.dateFormat: .*use dd\.MM\.yyyy/);
  });

  it('refuses a format with no year', () => {
    const error = configError(configEdited('labs/northfield.yaml', (lab) => (lab.format.dateFormat = 'MM-dd')));
    expect(error).toMatchObject({ keyPath: 'format.dateFormat' });
    expect(error.detail).toContain('a year (yyyy)');
  });
});
