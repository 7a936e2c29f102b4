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
  | {
      kind: 'results';
      lab: LabProfile;
      delimiter: Delimiter;
      headerLine: number;
      header: string[];
      columnIndex: Map<string, number>;
    }
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

function indexHeader(
  file: string,
  headerLine: number,
  header: string[],
  fold: (cell: string) => string,
): Map<string, number> {
  const index = new Map<string, number>();
  header.forEach((cell, position) => {
    const key = fold(cell);
    if (key === '') return;
    if (index.has(key))
      throw new IngestError({
        code: 'duplicate-header',
        file,
        line: headerLine,
        field: cell,
        value: cell,
        detail: `the header names column "${cell}" twice`,
      });
    index.set(key, position);
  });
  return index;
}

/** A required column the header lacks: the name a refusal gives as its field, and what the lab profile needs. */
interface MissingColumn {
  field: string;
  needs: string;
}

/**
 * The required columns a header lacks, and how many a complete header has: a long export's
 * sample ID, assay and Ct; a wide export's sample ID and at least one value column.
 */
function missingLabColumns(lab: LabProfile, header: readonly string[]): { missing: MissingColumn[]; required: number } {
  const folded = new Set(header.map(foldToken));
  const column = (name: string): MissingColumn => ({ field: name, needs: `a "${name}" column` });
  if (lab.layout === 'wide') {
    const missing = folded.has(foldToken(lab.columns.sampleId)) ? [] : [column(lab.columns.sampleId)];
    const names = [...lab.assays.values()].map((assay) => assay.labAssayName);
    if (!names.some((name) => folded.has(foldToken(name)))) {
      missing.push({
        field: names[0] ?? '',
        needs: `at least one of its value columns (${names.map((name) => `"${name}"`).join(', ')})`,
      });
    }
    return { missing, required: 2 };
  }
  const required = [lab.columns.sampleId, lab.columns.assay ?? '', lab.columns.result ?? ''];
  return { missing: required.filter((name) => !folded.has(foldToken(name))).map(column), required: required.length };
}

/** Where each rope-sheet column appears in a header: every cell that carries one of its names. */
type RopeMatch = Record<RopeSheetColumn, number[]>;

function matchRopeHeader(header: readonly string[], columns: RopeSheetColumns): RopeMatch {
  const owner = new Map<string, RopeSheetColumn>();
  for (const column of ROPE_SHEET_COLUMN_ORDER)
    for (const name of columns[column]) owner.set(ropeHeaderKey(name), column);
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
function ropeSheetKind(
  fileName: string,
  delimiter: Delimiter,
  header: string[],
  match: RopeMatch,
  columns: RopeSheetColumns,
): FileKind {
  for (const column of ROPE_SHEET_COLUMN_ORDER) {
    const cells = match[column];
    if (cells.length > 1) {
      const names = cells.map((position) => `"${header[position]}"`).join(' and ');
      throw new IngestError({
        code: 'duplicate-header',
        file: fileName,
        line: 1,
        field: header[cells[1]!],
        value: header[cells[1]!],
        detail: `the header cells ${names} both name the column for ${ROPE_SHEET_MEANING[column]} (${columns[column].join(', ')}); keep one, or list the one to read under ropeSheet.columns.${column} in sites.yaml`,
      });
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

/** A header row as detection sees it: its cells (undefined when the row is blank or absent), its line (row number) and delimiter. */
export interface FoundHeader {
  header: string[] | undefined;
  line: number;
  delimiter: Delimiter;
  /** Why the lab's header could not be looked for at all (a workbook without the lab's sheet). */
  problem?: string;
}

/** Where detection reads a file's header rows: the first row (as a rope sheet), and the row each lab profile puts its header on. */
export interface HeaderSource {
  first: FoundHeader;
  /** The first row's text, shown when nothing matches. */
  excerpt: string;
  forLab(lab: LabProfile): FoundHeader;
}

/**
 * Decides what a file is from its name and first block of text. A rope sheet is told by its
 * columns under any of their accepted names (`ropeColumns`: sites.yaml `ropeSheet.columns`, or
 * the defaults); a header that reads both as a rope sheet and as a lab's export is refused
 * unless the lab's fileNamePattern names the file.
 * @throws IngestError unknown-format, ambiguous-lab, missing-column, duplicate-header, empty-file.
 */
export function detectFileKind(
  fileName: string,
  head: string,
  labs: readonly LabProfile[],
  ropeColumns: RopeSheetColumns = DEFAULT_ROPE_SHEET_COLUMNS,
): FileKind {
  if (head.replace(/\uFEFF/g, '').trim() === '') throw new IngestError({ code: 'empty-file', file: fileName });
  const lines = head.split('\n');
  const firstLine = lines[0] ?? '';
  const firstDelimiter = guessDelimiter(firstLine);
  const source: HeaderSource = {
    first: { header: headerCells(head, 0, firstDelimiter), line: 1, delimiter: firstDelimiter },
    excerpt: firstLine,
    forLab: (lab) => {
      const delimiter = lab.delimiter === 'auto' ? guessDelimiter(lines[lab.skipLines] ?? '') : lab.delimiter;
      return { header: headerCells(head, lab.skipLines, delimiter), line: lab.skipLines + 1, delimiter };
    },
  };
  return detectKind(fileName, source, labs, ropeColumns);
}

/** How a header fits a rope sheet: the columns it names, whether it looks like one, what it lacks. */
interface RopeFit {
  match: RopeMatch | undefined;
  /** A sample ID and a pen column make a header look like a rope sheet. */
  like: boolean;
  missing: (typeof REQUIRED_ROPE_SHEET_COLUMNS)[number][];
  /** All required columns make it one. */
  complete: boolean;
}

function ropeFit(source: HeaderSource, ropeColumns: RopeSheetColumns): RopeFit {
  const header = source.first.header;
  const match = header ? matchRopeHeader(header, ropeColumns) : undefined;
  const like = match !== undefined && match.sampleId.length > 0 && match.pen.length > 0;
  const missing = match === undefined ? [] : REQUIRED_ROPE_SHEET_COLUMNS.filter((column) => match[column].length === 0);
  return { match, like, missing, complete: like && missing.length === 0 };
}

/** A lab profile the header (or the file name) may belong to. */
interface LabCandidate {
  lab: LabProfile;
  delimiter: Delimiter;
  header: string[];
  headerLine: number;
  byName: boolean;
  missing: MissingColumn[];
  required: number;
}

/** The labs named by the file name, or whose header lacks at most one required column less than all. */
function labCandidates(fileName: string, source: HeaderSource, labs: readonly LabProfile[]): LabCandidate[] {
  const candidates: LabCandidate[] = [];
  for (const lab of labs) {
    const found = source.forLab(lab);
    const byName = lab.fileNamePattern?.test(fileName) ?? false;
    // The lab's own file name with the lab's sheet missing: told as such, not as an unknown format.
    if (found.problem !== undefined && byName)
      throw new IngestError({ code: 'no-such-sheet', file: fileName, detail: found.problem });
    const header = found.header;
    if (!header) continue;
    const { missing, required } = missingLabColumns(lab, header);
    if (byName || missing.length < required - 1)
      candidates.push({ lab, delimiter: found.delimiter, header, headerLine: found.line, byName, missing, required });
  }
  return candidates;
}

/**
 * Decides what a file is from its name and its header rows, wherever they come from (a CSV's
 * lines, a workbook's sheets).
 * @throws IngestError unknown-format, ambiguous-lab, missing-column, duplicate-header, no-such-sheet.
 */
export function detectKind(
  fileName: string,
  source: HeaderSource,
  labs: readonly LabProfile[],
  ropeColumns: RopeSheetColumns = DEFAULT_ROPE_SHEET_COLUMNS,
): FileKind {
  const rope = ropeFit(source, ropeColumns);
  const candidates = labCandidates(fileName, source, labs);
  const complete = candidates.filter((candidate) => candidate.missing.length === 0);
  const named = complete.filter((candidate) => candidate.byName);

  if (rope.complete) {
    // The lab's own file name settles it; a header alone that fits both is not guessed at.
    if (named.length === 0 && complete.length > 0) {
      const ids = complete.map((candidate) => candidate.lab.id).join(', ');
      throw new IngestError({
        code: 'ambiguous-lab',
        file: fileName,
        line: 1,
        detail: `the header reads both as a rope sheet and as an export of lab profile ${ids}; give the lab a fileNamePattern that names its files, or drop the columns that do not belong`,
      });
    }
    if (named.length === 0)
      return ropeSheetKind(fileName, source.first.delimiter, source.first.header!, rope.match!, ropeColumns);
  }

  const chosen = named.length === 1 ? named[0] : complete.length === 1 ? complete[0] : undefined;
  if (!chosen) throw noLabChosen(fileName, source, rope, candidates, ropeColumns);
  const headerLine = chosen.headerLine;
  return {
    kind: 'results',
    lab: chosen.lab,
    delimiter: chosen.delimiter,
    headerLine,
    header: chosen.header,
    columnIndex: indexHeader(fileName, headerLine, chosen.header, foldToken),
  };
}

/** Why no single lab profile was chosen: several fit, a rope sheet or a lab's export lacks a column, or nothing fits. */
function noLabChosen(
  fileName: string,
  source: HeaderSource,
  rope: RopeFit,
  candidates: readonly LabCandidate[],
  ropeColumns: RopeSheetColumns,
): IngestError {
  const complete = candidates.filter((candidate) => candidate.missing.length === 0);
  const named = complete.filter((candidate) => candidate.byName);
  if (named.length > 1 || complete.length > 1) {
    const ids = (named.length > 1 ? named : complete).map((candidate) => candidate.lab.id).join(', ');
    return new IngestError({
      code: 'ambiguous-lab',
      file: fileName,
      detail: `the file matches more than one lab profile (${ids}); give each lab a distinct fileNamePattern`,
    });
  }
  if (rope.like) {
    const column = rope.missing[0]!;
    return new IngestError({
      code: 'missing-column',
      file: fileName,
      line: 1,
      field: ROPE_SHEET_OWN_NAME[column],
      detail: `this looks like a rope sheet but has no column for ${ROPE_SHEET_MEANING[column]} (a header cell named ${ropeColumns[column].map((name) => `"${name}"`).join(', ')}; other names go under ropeSheet.columns.${column} in sites.yaml)`,
    });
  }
  // A file named like a lab's exports but sharing none of its required columns (an invoice,
  // a wrong report template) is not that lab's export with columns missing: unknown format.
  const plausible = candidates.filter((candidate) => candidate.missing.length < candidate.required);
  const partial = plausible.find((candidate) => candidate.byName) ?? plausible[0];
  if (partial) {
    const column = partial.missing[0]!;
    return new IngestError({
      code: 'missing-column',
      file: fileName,
      line: partial.headerLine,
      field: column.field,
      detail: `lab profile ${partial.lab.id} needs ${column.needs}, which the header lacks`,
    });
  }
  return new IngestError({ code: 'unknown-format', file: fileName, line: 1, value: source.excerpt.slice(0, 120) });
}
