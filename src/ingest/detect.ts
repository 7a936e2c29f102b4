/**
 * What kind of file this is: a lab export (and from which lab) or a rope sheet, decided from the
 * file name and the header row alone, before any row is read.
 */
import { parse as parseSync } from 'csv-parse/sync';
import { foldToken } from '../util/fold.js';
import {
  DEFAULT_ROPE_SHEET_COLUMNS,
  REQUIRED_ROPE_SHEET_COLUMNS,
  ROPE_SHEET_COLUMN_ORDER,
  ROPE_SHEET_MEANING,
  ROPE_SHEET_OWN_NAME,
  ropeHeaderKey,
} from '../config/ropeSheet.js';
import type { LabProfile, RopeSheetColumn, RopeSheetColumns } from '../config/types.js';
import { IngestError } from './errors.js';

export type Delimiter = ',' | ';' | '\t' | '|';

/**
 * The key under which a rope sheet's `columnIndex` holds each column (its own name), whatever
 * the header calls it.
 */
export const ROPE_SHEET_COLUMNS = ROPE_SHEET_OWN_NAME;

export type FileKind =
  | { kind: 'results'; lab: LabProfile; delimiter: Delimiter; headerLine: number; header: string[]; columnIndex: Map<string, number> }
  | {
      kind: 'ropes';
      delimiter: Delimiter;
      headerLine: number;
      header: string[];
      /** Position of each column found, under its own name (`sample_id`, `hung_on`, ...). */
      columnIndex: Map<string, number>;
      /** The header cell of each column found, as written (refusals name the field so). */
      columnNames: Map<string, string>;
    };

function foldHeader(cell: string): string {
  return foldToken(cell.replace(/^\uFEFF/, '')).replace(/[\s-]+/g, '_');
}

/** The delimiter that splits a header line into the most fields, outside quotes. */
export function guessDelimiter(line: string): Delimiter {
  const counts: Record<Delimiter, number> = { ',': 0, ';': 0, '\t': 0, '|': 0 };
  let quoted = false;
  for (const char of line) {
    if (char === '"') quoted = !quoted;
    else if (!quoted && char in counts) counts[char as Delimiter]++;
  }
  let best: Delimiter = ',';
  for (const candidate of ['\t', ';', '|', ','] as Delimiter[]) if (counts[candidate] > counts[best]) best = candidate;
  return best;
}

function headerCells(text: string, lineIndex: number, delimiter: Delimiter): string[] | undefined {
  const lines = text.split('\n');
  const line = lines[lineIndex];
  if (line === undefined || line.trim() === '') return undefined;
  try {
    const rows = parseSync(line, { delimiter, relax_quotes: true, relax_column_count: true }) as string[][];
    return rows[0]?.map((cell) => cell.trim());
  } catch {
    return undefined;
  }
}

function indexHeader(file: string, headerLine: number, header: string[], fold: (cell: string) => string): Map<string, number> {
  const index = new Map<string, number>();
  header.forEach((cell, position) => {
    const key = fold(cell);
    if (key === '') return;
    if (index.has(key)) throw new IngestError('duplicate-header', file, headerLine, cell, cell, `the header names column "${cell}" twice`);
    index.set(key, position);
  });
  return index;
}

function requiredLabColumns(lab: LabProfile): string[] {
  return [lab.columns.sampleId, lab.columns.assay, lab.columns.result];
}

/** Where each rope-sheet column appears in a header: every cell that carries one of its names. */
type RopeMatch = Record<RopeSheetColumn, number[]>;

function matchRopeHeader(header: readonly string[], columns: RopeSheetColumns): RopeMatch {
  const owner = new Map<string, RopeSheetColumn>();
  for (const column of ROPE_SHEET_COLUMN_ORDER) for (const name of columns[column]) owner.set(ropeHeaderKey(name), column);
  const match = Object.fromEntries(ROPE_SHEET_COLUMN_ORDER.map((column) => [column, [] as number[]])) as RopeMatch;
  header.forEach((cell, position) => {
    const column = owner.get(ropeHeaderKey(cell));
    if (column !== undefined) match[column].push(position);
  });
  return match;
}

/**
 * The rope sheet a header describes, checked: no column named twice (two cells for the hanging
 * date could each be the right one, so neither is taken), no header cell repeated.
 */
function ropeSheetKind(fileName: string, delimiter: Delimiter, header: string[], match: RopeMatch, columns: RopeSheetColumns): FileKind {
  for (const column of ROPE_SHEET_COLUMN_ORDER) {
    const cells = match[column];
    if (cells.length > 1) {
      const names = cells.map((position) => `"${header[position]}"`).join(' and ');
      throw new IngestError(
        'duplicate-header',
        fileName,
        1,
        header[cells[1]!],
        header[cells[1]!],
        `the header cells ${names} both name the column for ${ROPE_SHEET_MEANING[column]} (${columns[column].join(', ')}); keep one, or list the one to read under ropeSheet.columns.${column} in sites.yaml`,
      );
    }
  }
  indexHeader(fileName, 1, header, ropeHeaderKey);
  const columnIndex = new Map<string, number>();
  const columnNames = new Map<string, string>();
  for (const column of ROPE_SHEET_COLUMN_ORDER) {
    const position = match[column][0];
    if (position === undefined) continue;
    columnIndex.set(ROPE_SHEET_OWN_NAME[column], position);
    columnNames.set(ROPE_SHEET_OWN_NAME[column], header[position]!);
  }
  return { kind: 'ropes', delimiter, headerLine: 1, header, columnIndex, columnNames };
}

/**
 * Decides what a file is from its name and first block of text. A rope sheet is told by its
 * columns under any of their accepted names (`ropeColumns`: sites.yaml `ropeSheet.columns`, or
 * the defaults); a header that reads both as a rope sheet and as a lab's export is refused
 * unless the lab's fileNamePattern names the file.
 * @throws IngestError unknown-format, ambiguous-lab, missing-column, duplicate-header, empty-file.
 */
export function detectFileKind(fileName: string, head: string, labs: readonly LabProfile[], ropeColumns: RopeSheetColumns = DEFAULT_ROPE_SHEET_COLUMNS): FileKind {
  if (head.replace(/\uFEFF/g, '').trim() === '') throw new IngestError('empty-file', fileName, undefined, undefined, undefined);

  const firstLine = head.split('\n')[0] ?? '';
  const ropeDelimiter = guessDelimiter(firstLine);
  const ropeHeader = headerCells(head, 0, ropeDelimiter);
  const ropeMatch = ropeHeader ? matchRopeHeader(ropeHeader, ropeColumns) : undefined;
  // A sample ID and a pen column make a header look like a rope sheet; all required columns make it one.
  const ropeLike = ropeMatch !== undefined && ropeMatch.sampleId.length > 0 && ropeMatch.pen.length > 0;
  const ropeMissing = ropeMatch === undefined ? [] : REQUIRED_ROPE_SHEET_COLUMNS.filter((column) => ropeMatch[column].length === 0);
  const ropeComplete = ropeLike && ropeMissing.length === 0;

  type Candidate = { lab: LabProfile; delimiter: Delimiter; header: string[]; byName: boolean; missing: string[] };
  const candidates: Candidate[] = [];
  for (const lab of labs) {
    const lines = head.split('\n');
    const line = lines[lab.skipLines] ?? '';
    const delimiter = lab.delimiter === 'auto' ? guessDelimiter(line) : lab.delimiter;
    const header = headerCells(head, lab.skipLines, delimiter);
    if (!header) continue;
    const folded = new Set(header.map(foldToken));
    const missing = requiredLabColumns(lab).filter((column) => !folded.has(foldToken(column)));
    const byName = lab.fileNamePattern?.test(fileName) ?? false;
    if (byName || missing.length < requiredLabColumns(lab).length - 1) candidates.push({ lab, delimiter, header, byName, missing });
  }
  const complete = candidates.filter((candidate) => candidate.missing.length === 0);
  const named = complete.filter((candidate) => candidate.byName);

  if (ropeComplete) {
    // The lab's own file name settles it; a header alone that fits both is not guessed at.
    if (named.length === 0 && complete.length > 0) {
      const ids = complete.map((candidate) => candidate.lab.id).join(', ');
      throw new IngestError(
        'ambiguous-lab',
        fileName,
        1,
        undefined,
        undefined,
        `the header reads both as a rope sheet and as an export of lab profile ${ids}; give the lab a fileNamePattern that names its files, or drop the columns that do not belong`,
      );
    }
    if (named.length === 0) return ropeSheetKind(fileName, ropeDelimiter, ropeHeader!, ropeMatch!, ropeColumns);
  }

  const chosen = named.length === 1 ? named[0] : complete.length === 1 ? complete[0] : undefined;
  if (!chosen) {
    if (named.length > 1 || complete.length > 1) {
      const ids = (named.length > 1 ? named : complete).map((candidate) => candidate.lab.id).join(', ');
      throw new IngestError('ambiguous-lab', fileName, undefined, undefined, undefined, `the file matches more than one lab profile (${ids}); give each lab a distinct fileNamePattern`);
    }
    if (ropeLike) {
      const column = ropeMissing[0]!;
      throw new IngestError(
        'missing-column',
        fileName,
        1,
        ROPE_SHEET_OWN_NAME[column],
        undefined,
        `this looks like a rope sheet but has no column for ${ROPE_SHEET_MEANING[column]} (a header cell named ${ropeColumns[column].map((name) => `"${name}"`).join(', ')}; other names go under ropeSheet.columns.${column} in sites.yaml)`,
      );
    }
    // A file named like a lab's exports but sharing none of its required columns (an invoice,
    // a wrong report template) is not that lab's export with columns missing: unknown format.
    const plausible = candidates.filter((candidate) => candidate.missing.length < requiredLabColumns(candidate.lab).length);
    const partial = plausible.find((candidate) => candidate.byName) ?? plausible[0];
    if (partial) {
      const column = partial.missing[0]!;
      throw new IngestError('missing-column', fileName, partial.lab.skipLines + 1, column, undefined, `lab profile ${partial.lab.id} needs a "${column}" column, which the header lacks`);
    }
    throw new IngestError('unknown-format', fileName, 1, undefined, firstLine.slice(0, 120));
  }
  const headerLine = chosen.lab.skipLines + 1;
  return {
    kind: 'results',
    lab: chosen.lab,
    delimiter: chosen.delimiter,
    headerLine,
    header: chosen.header,
    columnIndex: indexHeader(fileName, headerLine, chosen.header, foldToken),
  };
}

export { foldHeader as foldRopeSheetHeader };
