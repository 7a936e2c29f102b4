/**
 * The cell-level readers every record mapper shares: how a sample ID is compared, how a date cell
 * is read, a trimmed cell by position, and the content key of a reported result. Pure.
 */
import { hash } from 'node:crypto';
// Subpath imports: the package index loads every date-fns function (slow to start a worker).
import { format as formatDate } from 'date-fns/format';
import { isValid } from 'date-fns/isValid';
import { parse as parseDate } from 'date-fns/parse';
import { canonicalPenKey } from '../domain/layout.js';

/** How a sample ID is compared: capitals, no spaces. */
export function normaliseSampleId(raw: string): string {
  return raw.replace(/\s+/g, '').toUpperCase();
}

export { canonicalPenKey };

/**
 * Checks a sample ID against the planned-ID grammar: `planned` with its canonical spelling,
 * `corrected` when a person confirmed (config/corrections.yaml) that the ID as written on this
 * line meant another, `bad-check` when it has the planned shape for a configured site but a
 * wrong check character (mistyped), `other` for any other ID (a lab's or a farm's own numbering).
 */
export type PlannedIdCheck = (
  sampleId: string,
  line: number,
) =>
  | { kind: 'planned'; canonical: string }
  | { kind: 'corrected'; canonical: string; written: string }
  | { kind: 'bad-check' }
  | { kind: 'other' };

const ISO_DATE = 'yyyy-MM-dd';
const REFERENCE_DATE = new Date(2000, 0, 1);

const ISO_DAY = /^(\d{4})-(\d{2})-(\d{2})$/;
/**
 * Parsed date cells by format, then text: exports repeat a handful of dates over thousands of
 * rows. Two levels, so a look-up builds no key string per cell.
 */
const dateCache = new Map<string, Map<string, string | null>>();
const DATE_CACHE_LIMIT = 10_000;

/** Parses a date cell with the profile's format, accepting ISO dates too. Returns yyyy-MM-dd or undefined. */
export function parseDateCell(text: string, dateFormat: string): string | undefined {
  let byText = dateCache.get(dateFormat);
  if (byText === undefined) {
    byText = new Map();
    dateCache.set(dateFormat, byText);
  }
  const cached = byText.get(text);
  if (cached !== undefined) return cached ?? undefined;
  const parsed = parseDateUncached(text, dateFormat);
  if (byText.size >= DATE_CACHE_LIMIT) byText.clear();
  byText.set(text, parsed ?? null);
  return parsed;
}

function parseDateUncached(text: string, dateFormat: string): string | undefined {
  const trimmed = text.trim();
  const iso = ISO_DAY.exec(trimmed);
  if (iso) {
    // yyyy-MM-dd needs no parser: check the calendar with Date (months 1-12, real days, leap years).
    const [year, month, day] = [Number(iso[1]), Number(iso[2]), Number(iso[3])];
    const date = new Date(Date.UTC(year, month - 1, day));
    const real = date.getUTCFullYear() === year && date.getUTCMonth() === month - 1 && date.getUTCDate() === day;
    return real && year >= 1990 && year <= 2200 ? trimmed : undefined;
  }
  if (trimmed === '') return undefined;
  for (const candidate of [
    dateFormat,
    ISO_DATE,
    `${ISO_DATE}'T'HH:mm:ss`,
    `${ISO_DATE} HH:mm:ss`,
    `${ISO_DATE} HH:mm`,
  ]) {
    const parsed = parseDate(trimmed, candidate, REFERENCE_DATE);
    if (isValid(parsed) && parsed.getFullYear() >= 1990 && parsed.getFullYear() <= 2200)
      return formatDate(parsed, ISO_DATE);
  }
  // Date-times written with the profile's date format and a time after it.
  const firstPart = trimmed.split(/[ T]/)[0]!;
  if (firstPart !== trimmed) return parseDateUncached(firstPart, dateFormat);
  return undefined;
}

/** A trimmed cell, or undefined when the lab has no such column. */
export function cellAt(cells: readonly string[], position: number | undefined): string | undefined {
  return position === undefined ? undefined : (cells[position] ?? '').trim();
}

/**
 * The key that makes a re-sent report idempotent: 52 bits of SHA-1 over what the lab reported
 * (assay name, Ct, call, case, report date, status, control). Stored beside sample, assay and lab
 * under one UNIQUE index, so a clash would need two different reports of the same sample and
 * assay from the same lab to share 52 bits (about 1 in 4.5e15 for a pair).
 */
export function contentKey(parts: readonly string[]): number {
  // 'binary' (latin1): one character per digest byte, the cheapest form node:crypto hands a digest in
  // (cheaper than hex, which this key was first read from, and than a Buffer).
  return leading52Bits(hash('sha1', parts.join('\u001f'), 'binary'));
}

/**
 * The first 52 bits of a digest given one character per byte (latin1), as a number: the same
 * value as its first 13 hex digits read as one integer (how keys stored before were made). 52
 * bits fit a double exactly.
 */
export function leading52Bits(digest: string): number {
  // Six whole bytes (48 bits), then the high half of the seventh.
  const high = digest.charCodeAt(0) * 256 + digest.charCodeAt(1);
  const low =
    ((digest.charCodeAt(2) << 24) >>> 0) +
    (digest.charCodeAt(3) << 16) +
    (digest.charCodeAt(4) << 8) +
    digest.charCodeAt(5);
  return (high * 2 ** 32 + low) * 16 + (digest.charCodeAt(6) >> 4);
}
