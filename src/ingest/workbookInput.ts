/**
 * A workbook through the same path as a CSV export: its bytes read once (exactly those hashed),
 * its kind detected from the header row each lab profile names (workbook.sheet, .headerRow) or
 * from the first row of the first sheet (a rope sheet), and its rows mapped by the same record
 * mapping in the same batches. Lines are the sheet's row numbers; refusals name the column's
 * header, and the receipt the sheet.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import type { Worksheet } from 'exceljs';
import type { LabProfile, RopeSheetColumns } from '../config/types.js';
import { foldToken } from '../util/fold.js';
import { detectKind, ROPE_SHEET_COLUMNS, type FileKind, type FoundHeader } from './detect.js';
import { IngestError, rowRejection } from './errors.js';
import {
  FileChangedError,
  recordTaker,
  type ExpectedContent,
  type MappedBatch,
  type MappingSetup,
} from './mappedBatches.js';
import type { ResultRow } from '../domain/records.js';
import type { OpenedWorkbook, SheetReading } from './xlsxReader.js';

/**
 * The file's bytes, exactly those that were hashed: a workbook is read whole, from this buffer,
 * so what is parsed is what the hash and the receipt name.
 * @throws FileChangedError when the file no longer holds those bytes
 */
export function readHashedBytes(file: string, fileName: string, expected: ExpectedContent): Buffer {
  const bytes = Buffer.alloc(expected.bytes);
  const handle = fs.openSync(file, 'r');
  let read = 0;
  try {
    while (read < bytes.length) {
      const got = fs.readSync(handle, bytes, read, bytes.length - read, read);
      if (got === 0) break;
      read += got;
    }
  } finally {
    fs.closeSync(handle);
  }
  if (read !== expected.bytes)
    throw new FileChangedError(
      `${fileName} changed while it was read (${expected.bytes} bytes when hashed, ${read} read)`,
    );
  if (createHash('sha256').update(bytes).digest('hex') !== expected.sha256) {
    throw new FileChangedError(
      `${fileName} changed while it was read (its bytes no longer match the hash taken before reading)`,
    );
  }
  return bytes;
}

/** A workbook's kind, and the sheet and header row its rows are read from. */
export interface WorkbookKind {
  kind: FileKind;
  sheet: Worksheet;
  headerRow: number;
}

const SHEET_DELIMITER = '\t';

function headerOf(workbook: OpenedWorkbook, sheet: Worksheet, row: number): string[] | undefined {
  const cells = workbook.rowText(sheet, row)?.map((cell) => cell.trim());
  return cells === undefined || cells.every((cell) => cell === '') ? undefined : cells;
}

/**
 * Decides what a workbook is: a lab's export (its header on the row, and in the sheet, its
 * profile names) or a rope sheet (header on the first row of the first visible sheet).
 * @throws IngestError empty-file, no-such-sheet, and detection's codes (unknown-format, missing-column, ...)
 */
export function detectWorkbook(
  fileName: string,
  workbook: OpenedWorkbook,
  labs: readonly LabProfile[],
  ropeColumns: RopeSheetColumns | undefined,
): WorkbookKind {
  if (workbook.isBlank())
    throw new IngestError({ code: 'empty-file', file: fileName, detail: 'no sheet of the workbook holds a value' });
  const first = workbook.sheet(undefined)!;
  const sheetList = workbook.sheetNames.map((name) => `"${name}"`).join(', ');
  const firstHeader = headerOf(workbook, first, 1);
  const kind = detectKind(
    fileName,
    {
      first: { header: firstHeader, line: 1, delimiter: SHEET_DELIMITER },
      excerpt: (firstHeader ?? []).join(', '),
      forLab: (lab): FoundHeader => {
        const line = lab.workbook.headerRow;
        const sheet = workbook.sheet(lab.workbook.sheet);
        if (sheet === undefined) {
          return {
            header: undefined,
            line,
            delimiter: SHEET_DELIMITER,
            problem: `lab profile ${lab.id} reads sheet "${lab.workbook.sheet}", which the workbook does not have (its sheets: ${sheetList})`,
          };
        }
        return { header: headerOf(workbook, sheet, line), line, delimiter: SHEET_DELIMITER };
      },
    },
    labs,
    ropeColumns,
  );
  if (kind.kind === 'ropes') return { kind, sheet: first, headerRow: 1 };
  return { kind, sheet: workbook.sheet(kind.lab.workbook.sheet)!, headerRow: kind.headerLine };
}

/** Which columns hold dates (a number there is a serial date), and which the mapping reads. */
function sheetReading(kind: FileKind, date1904: boolean): SheetReading {
  const positions = (names: readonly (string | undefined)[]) =>
    new Set(
      names.flatMap((name) =>
        name === undefined
          ? []
          : [kind.columnIndex.get(kind.kind === 'results' ? foldToken(name) : name)].filter(
              (at): at is number => at !== undefined,
            ),
      ),
    );
  if (kind.kind === 'ropes') {
    return {
      dateColumns: positions([ROPE_SHEET_COLUMNS.hungOn]),
      needed: new Set(kind.columnIndex.values()),
      asText: { decimal: '.', asDate: false, date1904 },
      asDate: { decimal: '.', asDate: true, date1904 },
    };
  }
  const { lab } = kind;
  const read = [
    ...Object.values(lab.columns),
    ...lab.statusColumns,
    ...(lab.layout === 'wide' ? [...lab.assays.values()].map((assay) => assay.labAssayName) : []),
  ];
  return {
    dateColumns: positions([lab.columns.collectedOn, lab.columns.reportedOn]),
    needed: positions(read),
    asText: { decimal: lab.decimal, asDate: false, date1904 },
    asDate: { decimal: lab.decimal, asDate: true, date1904 },
  };
}

/**
 * The sheet's rows mapped in batches of about `batchRows`, as mappedBatches maps a CSV's records.
 * A row whose needed cell holds a formula saved without its value is refused
 * (formula-without-value), naming the column.
 */
export function* workbookBatches(
  setup: MappingSetup,
  workbook: OpenedWorkbook,
  found: WorkbookKind,
  batchRows: number,
): Generator<MappedBatch<ResultRow[]>> {
  const taker = recordTaker(setup);
  const { kind } = found;
  for (const row of workbook.rows(
    found.sheet,
    found.headerRow,
    kind.header.length,
    sheetReading(kind, workbook.date1904),
  )) {
    const first = row.uncalculated[0];
    if (first === undefined) {
      taker.take(row);
    } else {
      const field = kind.header[first];
      taker.refuse(
        rowRejection({
          code: 'formula-without-value',
          line: row.line,
          field,
          detail: `the cell under "${field}" holds a formula saved without its calculated value; open the workbook in its spreadsheet program, let it calculate, save it and drop it again`,
        }),
      );
    }
    if (taker.size() >= batchRows) yield taker.batch();
  }
  if (taker.size() > 0) yield taker.batch();
}

/** The receipt's and the store's note on how the file was read. */
export function workbookNote(found: WorkbookKind): string {
  return `Office Open XML workbook (.xlsx), sheet "${found.sheet.name}", header on row ${found.headerRow}`;
}
