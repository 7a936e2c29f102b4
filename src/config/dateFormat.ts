/**
 * Checks a configured date format (date-fns tokens, Unicode Technical Standard #35 patterns)
 * before any file is read: a format date-fns refuses would otherwise throw at ingest, without
 * the file or the key, and one that drops the year or the day would read every cell wrongly.
 */
import { format as formatDate } from 'date-fns/format';
import { isValid } from 'date-fns/isValid';
import { parse as parseDate } from 'date-fns/parse';

// How date-fns splits a format into tokens (its formattingTokensRegExp): an ordinal such as
// "do", a run of one letter, a quoted literal, or any other character.
const TOKENS = /[yYQqMLwIdDecihHKkms]o|(\w)\1*|''|'(''|[^'])+('|$)|./g;

// Dates written and read back: the first two differ from each other and from the reference
// date in year, month and day (a field the format lacks comes back from the reference), one
// with two-digit, one with one-digit month and day; the third is written "1112031" by "dMyyyy",
// which reads back as 11 January: a format without separators or padding cannot tell them apart.
const PROBES: readonly (readonly [number, number, number])[] = [
  [2031, 11, 27],
  [1997, 2, 3],
  [2031, 11, 1],
];
// The reference date ingest parses against (src/ingest/recordCells.ts): fields a format lacks come from it.
const REFERENCE_DATE = new Date(2000, 0, 1);

const iso = (year: number, month: number, day: number) =>
  `${String(year).padStart(4, '0')}-${String(month).padStart(2, '0')}-${String(day).padStart(2, '0')}`;

/** Rewrites day-of-year (D) and week-numbering-year (Y) tokens as day-of-month and calendar year, outside quoted text. */
function withCalendarTokens(format: string): string {
  return format.replace(TOKENS, (token) =>
    /^D+$/.test(token) ? token.replace(/D/g, 'd') : /^Y+$/.test(token) ? token.replace(/Y/g, 'y') : token,
  );
}

/**
 * Why `format` cannot read the dates of a lab export, or undefined when it can: every token is
 * one date-fns formats and parses, and a date written with it reads back as the same day.
 */
export function dateFormatProblem(format: string): string | undefined {
  const tokens = format.match(TOKENS) ?? [];
  // date-fns throws on D, DD, YY and YYYY and only warns (on the console, each call) on the
  // other lengths: D is the day of the year and Y the week-numbering year, which agree with the
  // day and year of the calendar on some dates only (date-fns docs, "Unicode tokens").
  if (tokens.some((token) => /^[DY]+$/.test(token))) {
    const fixed = withCalendarTokens(format);
    const suggestion = dateFormatProblem(fixed) === undefined ? fixed : 'dd.MM.yyyy';
    return `"${format}" uses D (day of the year) or Y (week-numbering year); day and year of a date are written d and y: use ${suggestion}`;
  }
  for (const [year, month, day] of PROBES) {
    const date = new Date(year, month - 1, day);
    let written: string;
    let read: Date;
    try {
      written = formatDate(date, format);
      read = parseDate(written, format, REFERENCE_DATE);
    } catch (error) {
      return `"${format}" is not a date-fns format: ${(error as Error).message.split('\n')[0]}`;
    }
    const readBack = isValid(read) ? iso(read.getFullYear(), read.getMonth() + 1, read.getDate()) : undefined;
    if (readBack !== iso(year, month, day)) {
      return `"${format}" does not carry a whole date: ${iso(year, month, day)} is written "${written}" and ${readBack === undefined ? 'cannot be read back' : `reads back as ${readBack}`}; a date format needs a day (d or dd), a month (M, MM or MMM; mm is minutes) and a year (yyyy), e.g. dd.MM.yyyy`;
    }
  }
  return undefined;
}
