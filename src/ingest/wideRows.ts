/**
 * Wide exports (one row per sample, one value column per assay) reshaped into the long rows the
 * rest of ingest reads: each value cell becomes one row of its sample and assay, mapped by
 * mapResultRow with the value column standing as the Ct column. Classification, supersession
 * and receipts are therefore those of a long export; a refusal names the sheet or file line of
 * the sample's row and, for a value, its column's header.
 *
 * A blank value cell, or one holding a word of the profile's notTestedTokens, is "not tested":
 * no row, nothing stored. In a wide table every sample has a cell under every assay whether the
 * assay was ordered or not, so a blank there says nothing about the sample; reading it as not
 * detected would store negatives for tests never run (and raise detection confidence on them).
 * The profile's not-detected rules still apply to every other value ("Undetermined", 0, the
 * cycle limit).
 */
import { foldToken } from '../util/fold.js';
import type { RowRejection } from './errors.js';
import { mapResultRow, type ResultContext } from './resultRecords.js';
import type { ResultRow } from '../domain/records.js';

/**
 * The header key under which each value column's context finds its assay name, in a cell
 * appended past the header. No header cell holds a NUL: decode.ts takes a head with NUL bytes
 * for binary, and XML 1.0 has no NUL character (production [2] Char), so neither can a workbook.
 */
const ASSAY_KEY = '\u0000assay';

interface ValueColumn {
  position: number;
  /** The header cell as written: refusals of the value name it. */
  header: string;
  labAssayName: string;
  context: ResultContext;
}

export interface WideLayout {
  width: number;
  /** The value columns the header has, left to right. */
  columns: readonly ValueColumn[];
  notTested: ReadonlySet<string>;
}

/** The value columns of a wide export's header: a context per lab assay whose column is there. */
export function wideLayout(base: ResultContext, header: readonly string[]): WideLayout {
  const width = header.length;
  const columns: ValueColumn[] = [];
  for (const labAssay of base.lab.assays.values()) {
    const position = base.columnIndex.get(foldToken(labAssay.labAssayName));
    if (position === undefined) continue;
    const columnIndex = new Map(base.columnIndex);
    columnIndex.set(foldToken(ASSAY_KEY), width);
    const lab = { ...base.lab, columns: { ...base.lab.columns, assay: ASSAY_KEY, result: header[position]! } };
    columns.push({
      position,
      header: header[position]!,
      labAssayName: labAssay.labAssayName,
      context: { ...base, lab, columnIndex },
    });
  }
  columns.sort((a, b) => a.position - b.position);
  return { width, columns, notTested: base.lab.notTestedTokens };
}

/**
 * Maps one wide row: a result (or a refusal) per value cell that holds a value. A refusal that
 * concerns the sample rather than one value (an empty or mistyped sample ID, a bad collection
 * date) is told once for the row.
 */
export function mapWideRow(
  cells: readonly string[],
  line: number,
  layout: WideLayout,
  results: ResultRow[],
  rejections: RowRejection[],
): void {
  let long: string[] | undefined;
  let toldForRow: string[] | undefined;
  for (const column of layout.columns) {
    const value = (cells[column.position] ?? '').trim();
    if (value === '' || layout.notTested.has(foldToken(value))) continue;
    if (long === undefined) {
      long = cells.slice(0, layout.width);
      while (long.length < layout.width) long.push('');
    }
    long[layout.width] = column.labAssayName;
    const outcome = mapResultRow(long, line, column.context);
    if (outcome.ok) {
      results.push(outcome.row);
      continue;
    }
    const rejection = outcome.rejection;
    if (rejection.field !== column.header) {
      const key = `${rejection.code}\u001f${rejection.field ?? ''}`;
      toldForRow ??= [];
      if (toldForRow.includes(key)) continue;
      toldForRow.push(key);
    }
    rejections.push(rejection);
  }
}
