/**
 * Rope-sheet columns and the header names each may carry. Kept free of YAML and schema code:
 * file detection (src/ingest/detect.ts) reads it too.
 *
 * A barn crew writes its sheet by hand or from its own spreadsheet, so the header varies
 * ("Sample ID", "sample_no", "Collected on"). Each column has its own name (what ropewatch's own
 * rope lists print) and a few synonyms accepted by default; sites.yaml `ropeSheet.columns` may
 * replace the synonyms of a column with names of its own. The synonyms are common spreadsheet
 * headings for the same thing (common practice, no source), chosen so that no name belongs to
 * two columns; a header in which two cells name one column is refused, never guessed at.
 */
import type { RopeSheetColumn, RopeSheetColumns } from './types.js';

/** Every column, in the order ropewatch prints them; all but `notes` and `pool` are required. */
export const ROPE_SHEET_COLUMN_ORDER: readonly RopeSheetColumn[] = [
  'sampleId',
  'site',
  'barn',
  'pen',
  'hungOn',
  'notes',
  'pool',
];

export const REQUIRED_ROPE_SHEET_COLUMNS: readonly RopeSheetColumn[] = ['sampleId', 'site', 'barn', 'pen', 'hungOn'];

/** Each column's own name: always accepted, and the name refusals report when the sheet lacks it. */
export const ROPE_SHEET_OWN_NAME: Readonly<Record<RopeSheetColumn, string>> = {
  sampleId: 'sample_id',
  site: 'site',
  barn: 'barn',
  pen: 'pen',
  hungOn: 'hung_on',
  notes: 'notes',
  pool: 'pool',
};

/** Synonyms accepted when sites.yaml names none for the column (common practice, no source). */
export const ROPE_SHEET_SYNONYMS: Readonly<Record<RopeSheetColumn, readonly string[]>> = {
  sampleId: ['sample', 'sample_no', 'sample_number', 'tube_id', 'rope_id'],
  site: ['site_id', 'site_code', 'farm', 'farm_id'],
  barn: ['barn_id', 'house', 'building'],
  pen: ['pen_id', 'pen_no', 'pen_number'],
  hungOn: ['hung', 'date_hung', 'hanging_date', 'collected_on', 'collection_date', 'sampled_on', 'sampling_date'],
  notes: ['note', 'comment', 'comments', 'remarks'],
  // Ropes that share a pool ID were tested together in one PCR; the lab reports under the pool ID.
  pool: ['pool_id', 'pool_no', 'pool_number', 'pooled_as'],
};

/** What each column holds, for messages. */
export const ROPE_SHEET_MEANING: Readonly<Record<RopeSheetColumn, string>> = {
  sampleId: 'the sample ID',
  site: 'the site',
  barn: 'the barn',
  pen: 'the pen',
  hungOn: 'the date the rope was hung',
  notes: 'notes',
  pool: 'the pool the rope was tested in',
};

/** The accepted names of a column: its own name, then `configured` when given, else the synonyms. */
export function ropeColumnNames(column: RopeSheetColumn, configured?: readonly string[]): readonly string[] {
  const names = [ROPE_SHEET_OWN_NAME[column], ...(configured ?? ROPE_SHEET_SYNONYMS[column])];
  const seen = new Set<string>();
  return names.filter((name) => {
    const key = ropeHeaderKey(name);
    if (seen.has(key)) return false;
    seen.add(key);
    return true;
  });
}

export const DEFAULT_ROPE_SHEET_COLUMNS: RopeSheetColumns = Object.freeze(
  Object.fromEntries(
    ROPE_SHEET_COLUMN_ORDER.map((column) => [column, Object.freeze(ropeColumnNames(column))]),
  ) as Record<RopeSheetColumn, readonly string[]>,
);

/**
 * How a rope-sheet header cell is compared: a byte-order mark dropped, lower case, and only
 * letters and digits kept, so "Sample ID", "sample_id", "SAMPLE-ID" and "Sample id:" are one name.
 */
export function ropeHeaderKey(cell: string): string {
  return cell
    .replace(/^\uFEFF/, '')
    .normalize('NFC')
    .toLowerCase()
    .replace(/[^\p{L}\p{N}]+/gu, '');
}
