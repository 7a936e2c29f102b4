/**
 * What kind of file this is: a lab export (and from which lab) or a rope sheet, decided from the
 * file name and the header row alone, before any row is read.
 */
import { parse as parseSync } from 'csv-parse/sync';
import { foldToken } from '../util/fold.js';
import type { LabProfile } from '../config/types.js';
import { IngestError } from './errors.js';

export type Delimiter = ',' | ';' | '\t' | '|';

/** Rope-sheet columns, as written in the header (case and spacing are folded). */
export const ROPE_SHEET_COLUMNS = {
  sampleId: 'sample_id',
  site: 'site',
  barn: 'barn',
  pen: 'pen',
  hungOn: 'hung_on',
} as const;

export type FileKind =
  | { kind: 'results'; lab: LabProfile; delimiter: Delimiter; headerLine: number; header: string[]; columnIndex: Map<string, number> }
  | { kind: 'ropes'; delimiter: Delimiter; headerLine: number; header: string[]; columnIndex: Map<string, number> };

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

/**
 * Decides what a file is from its name and first block of text.
 * @throws IngestError unknown-format, ambiguous-lab, missing-column, duplicate-header, empty-file.
 */
export function detectFileKind(fileName: string, head: string, labs: readonly LabProfile[]): FileKind {
  if (head.replace(/\uFEFF/g, '').trim() === '') throw new IngestError('empty-file', fileName, undefined, undefined, undefined);

  const firstLine = head.split('\n')[0] ?? '';
  const ropeDelimiter = guessDelimiter(firstLine);
  const ropeHeader = headerCells(head, 0, ropeDelimiter);
  if (ropeHeader) {
    const folded = new Set(ropeHeader.map(foldHeader));
    const required = Object.values(ROPE_SHEET_COLUMNS);
    const present = required.filter((column) => folded.has(column));
    if (present.length === required.length) {
      return {
        kind: 'ropes',
        delimiter: ropeDelimiter,
        headerLine: 1,
        header: ropeHeader,
        columnIndex: indexHeader(fileName, 1, ropeHeader, foldHeader),
      };
    }
    if (folded.has(ROPE_SHEET_COLUMNS.sampleId) && folded.has(ROPE_SHEET_COLUMNS.pen)) {
      const missing = required.find((column) => !folded.has(column))!;
      throw new IngestError('missing-column', fileName, 1, missing, undefined, `this looks like a rope sheet but has no "${missing}" column`);
    }
  }

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
  const chosen = named.length === 1 ? named[0] : complete.length === 1 ? complete[0] : undefined;
  if (!chosen) {
    if (named.length > 1 || complete.length > 1) {
      const ids = (named.length > 1 ? named : complete).map((candidate) => candidate.lab.id).join(', ');
      throw new IngestError('ambiguous-lab', fileName, undefined, undefined, undefined, `the file matches more than one lab profile (${ids}); give each lab a distinct fileNamePattern`);
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
