/**
 * Excel workbooks (.xlsx, Office Open XML) read into the same text cells a CSV export gives, so
 * that one row mapping serves both. The bytes are checked before exceljs unpacks anything: a
 * password-protected workbook, another spreadsheet format, a damaged zip or one that unpacks
 * beyond the limits below is refused with a code. exceljs (4.4.0) is loaded only when a
 * workbook arrives; it reads a workbook whole (its streaming reader spills sheets to temporary
 * files when the shared strings come after them), hence the limits.
 */
import type { Cell, CellValue, Workbook, Worksheet } from 'exceljs';
import { IngestError } from './errors.js';
import { checkUnpackedSizes, ZipProblem, zipEntries, type ZipEntry } from './zipDirectory.js';

/** A workbook file beyond this many bytes is refused before it is read. */
export const WORKBOOK_MAX_BYTES = 64 * 1024 * 1024;
/**
 * Its parts together may unpack to this many bytes. exceljs holds a workbook at about 12 times
 * its unpacked size (measured on the test machine: 62.6 MB unpacked, 150,000 rows of nine
 * cells, 770 MB peak resident and 11 s to open and read), so this keeps one workbook under a
 * gigabyte: about 150,000 such rows.
 */
export const WORKBOOK_MAX_UNPACKED_BYTES = 64 * 1024 * 1024;
/** Parts a workbook may hold (a sheet, its styles, shared strings, images...). */
export const WORKBOOK_MAX_PARTS = 10_000;

/** Names of spreadsheet files: read as workbooks (an .xlsx), or refused with the reason (the others). */
const SPREADSHEET_NAME = /\.(xlsx|xlsm|xls|xlsb|ods)$/i;
/** A zip archive's first local header (APPNOTE.TXT 4.3.7) and an OLE compound file's signature ([MS-CFB] 2.2). */
const ZIP_MAGIC = Buffer.from([0x50, 0x4b, 0x03, 0x04]);
const COMPOUND_FILE_MAGIC = Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]);

/**
 * True when a file is to be read as a workbook: a spreadsheet's name, or the bytes of a zip
 * archive or of an OLE compound file (an old .xls, or an encrypted workbook) under any name.
 */
export function isWorkbookFile(name: string, head: Uint8Array): boolean {
  if (SPREADSHEET_NAME.test(name)) return true;
  const starts = (magic: Buffer) => head.length >= magic.length && magic.every((byte, index) => head[index] === byte);
  return starts(ZIP_MAGIC) || starts(COMPOUND_FILE_MAGIC);
}

/**
 * Why bytes in an OLE compound file are not a workbook ropewatch opens: an Office document
 * encrypted with a password keeps its package in streams named EncryptionInfo and
 * EncryptedPackage ([MS-OFFCRYPTO] 2.3.4.1, 2.3.4.4); any other compound file here is a binary
 * Excel 97-2003 workbook or another Office document.
 */
function compoundFileRefusal(bytes: Buffer, fileName: string): IngestError {
  // Directory entry names are UTF-16LE ([MS-CFB] 2.6.1).
  if (bytes.includes(Buffer.from('EncryptedPackage', 'utf16le'))) {
    return new IngestError({
      code: 'workbook-encrypted',
      file: fileName,
      detail: 'the workbook is protected with a password; save it again without one (or export CSV) and drop that file',
    });
  }
  return new IngestError({
    code: 'not-a-workbook',
    file: fileName,
    detail: 'an Excel 97-2003 workbook (.xls) or another binary Office file, not .xlsx; save it as .xlsx or CSV',
  });
}

/** The refusal for a zip archive that is not an .xlsx workbook, from the parts it holds. */
function otherPackageRefusal(entries: readonly ZipEntry[], fileName: string): IngestError {
  const names = new Set(entries.map((entry) => entry.name));
  const detail = names.has('xl/workbook.bin')
    ? 'a binary workbook (.xlsb), not .xlsx; save it as .xlsx or CSV'
    : names.has('content.xml') && names.has('mimetype')
      ? 'an OpenDocument spreadsheet (.ods), not .xlsx; save it as .xlsx or CSV'
      : 'a zip archive without an Excel workbook in it (no xl/workbook.xml)';
  return new IngestError({ code: 'not-a-workbook', file: fileName, detail });
}

/**
 * The refusal of a workbook of `size` bytes, or undefined when it is small enough to read whole.
 * Checked on the file's size before its bytes are read, and again on the bytes opened.
 */
export function workbookSizeRefusal(size: number, fileName: string): IngestError | undefined {
  if (size <= WORKBOOK_MAX_BYTES) return undefined;
  return new IngestError({
    code: 'workbook-too-large',
    file: fileName,
    detail: `the workbook has ${size} bytes; at most ${WORKBOOK_MAX_BYTES} are read (a workbook is read whole): split it, or export CSV`,
  });
}

/**
 * Checks the bytes and opens them as a workbook.
 * @throws IngestError not-a-workbook, workbook-encrypted, workbook-too-large
 */
export async function openWorkbook(bytes: Buffer, fileName: string): Promise<OpenedWorkbook> {
  const refuse = (code: 'not-a-workbook' | 'workbook-too-large', detail: string) =>
    new IngestError({ code, file: fileName, detail });
  const tooLarge = workbookSizeRefusal(bytes.length, fileName);
  if (tooLarge) throw tooLarge;
  if (bytes.subarray(0, COMPOUND_FILE_MAGIC.length).equals(COMPOUND_FILE_MAGIC))
    throw compoundFileRefusal(bytes, fileName);
  let entries: ZipEntry[];
  try {
    entries = zipEntries(bytes, WORKBOOK_MAX_PARTS);
    if (!entries.some((entry) => entry.name === 'xl/workbook.xml')) throw otherPackageRefusal(entries, fileName);
    checkUnpackedSizes(bytes, entries, WORKBOOK_MAX_UNPACKED_BYTES);
  } catch (error) {
    if (!(error instanceof ZipProblem)) throw error;
    if (error.kind === 'too-large')
      throw refuse(
        'workbook-too-large',
        `the workbook is too large to read whole: ${error.message}; split it, or export CSV`,
      );
    if (error.kind === 'not-zip')
      throw refuse('not-a-workbook', `not an .xlsx workbook (${error.message}); an .xlsx file is a zip archive`);
    throw refuse('not-a-workbook', `the workbook is damaged: ${error.message}`);
  }
  const { default: ExcelJS } = await import('exceljs');
  const workbook = new ExcelJS.Workbook();
  try {
    // exceljs declares its own Buffer type, which Node's generic Buffer does not match by name.
    await workbook.xlsx.load(bytes as unknown as Parameters<typeof workbook.xlsx.load>[0]);
  } catch (error) {
    throw refuse('not-a-workbook', `the workbook cannot be read (${(error as Error).message.split('\n')[0]})`);
  }
  if (workbook.worksheets.length === 0) throw refuse('not-a-workbook', 'the workbook has no worksheet');
  return new OpenedWorkbook(workbook);
}

/** How one cell is read into text. */
export interface CellReading {
  /** The lab's decimal mark: a number is written with it, as in the lab's CSV. */
  decimal: '.' | ',';
  /** A date column: a number is an Excel serial date, and a date-time keeps its day only. */
  asDate: boolean;
  /** The workbook counts serial dates from 1904 (ECMA-376 Part 1, 18.2.28 workbookPr date1904). */
  date1904: boolean;
}

const DAY_MS = 86_400_000;
/** Serial 1 is 1900-01-01; Excel also counts a 29 February 1900 that never was (serial 60), so later serials count from 1899-12-30 (ECMA-376 Part 1, 18.17.4.1). */
const EPOCH_1900_MS = Date.UTC(1899, 11, 30);
/** In the 1904 system serial 0 is 1904-01-01 (ECMA-376 Part 1, 18.17.4.1). */
const EPOCH_1904_MS = Date.UTC(1904, 0, 1);
/** Excel's last date, 9999-12-31, in the 1900 system (Excel specifications and limits); the 1904 system counts 1,462 days fewer (ECMA-376 Part 1, 18.17.4.1). */
const LAST_SERIAL_1900 = 2_958_465;
const LAST_SERIAL_1904 = LAST_SERIAL_1900 - 1462;

/** The day an Excel serial number names, as yyyy-MM-dd; undefined outside Excel's dates (and for the 29 February 1900 it counts). */
export function serialDay(serial: number, date1904: boolean): string | undefined {
  if (
    !Number.isFinite(serial) ||
    serial < (date1904 ? 0 : 1) ||
    serial >= (date1904 ? LAST_SERIAL_1904 : LAST_SERIAL_1900) + 1
  )
    return undefined;
  const day = Math.floor(serial);
  if (date1904) return isoDay(new Date(EPOCH_1904_MS + day * DAY_MS));
  if (day === 60) return undefined;
  return isoDay(new Date(EPOCH_1900_MS + (day < 60 ? day + 1 : day) * DAY_MS));
}

function isoDay(date: Date): string {
  return date.toISOString().slice(0, 10);
}

/**
 * A number as Excel shows it at most: 15 significant digits (Excel specifications and limits,
 * "Number precision: 15 digits"), so 31.499999999999996 stored for 31.5 reads 31.5. Written with
 * the lab's decimal mark.
 */
export function numberText(value: number, decimal: '.' | ','): string {
  const text = String(Number(value.toPrecision(15)));
  return decimal === ',' ? text.replace('.', ',') : text;
}

/**
 * One cell's value as text: numbers as numberText, dates as ISO dates (a date-time outside a
 * date column as yyyy-MM-ddTHH:mm:ss), formulas as their cached result, rich text as its plain
 * text, a hyperlink as its text, an error as Excel writes it (#N/A), booleans as TRUE and FALSE,
 * empty cells as ''. Undefined for a formula saved without its result: its value is unknown.
 */
export function cellText(value: CellValue, how: CellReading): string | undefined {
  if (value === null || value === undefined) return '';
  if (typeof value === 'string') return value;
  if (typeof value === 'number')
    return (how.asDate ? serialDay(value, how.date1904) : undefined) ?? numberText(value, how.decimal);
  if (typeof value === 'boolean') return value ? 'TRUE' : 'FALSE';
  if (value instanceof Date) {
    if (Number.isNaN(value.getTime())) return '';
    const iso = value.toISOString();
    return how.asDate || iso.endsWith('T00:00:00.000Z') ? iso.slice(0, 10) : iso.slice(0, 19);
  }
  if ('richText' in value) return value.richText.map((run) => run.text).join('');
  if ('error' in value) return value.error;
  if ('formula' in value || 'sharedFormula' in value)
    return value.result === undefined ? undefined : cellText(value.result, how);
  if ('hyperlink' in value) return cellText(value.text as CellValue, how);
  return '';
}

/** A workbook's sheet rows, as text cells with their sheet row numbers. */
export class OpenedWorkbook {
  readonly date1904: boolean;
  /** Sheet names in the workbook's order. */
  readonly sheetNames: readonly string[];
  private readonly sheets: readonly Worksheet[];

  constructor(workbook: Workbook) {
    this.date1904 = workbook.properties.date1904 === true;
    this.sheets = workbook.worksheets;
    this.sheetNames = this.sheets.map((sheet) => sheet.name);
  }

  /**
   * The sheet of that name, case ignored (Excel keeps sheet names unique ignoring case; from
   * memory), or without a name the first sheet a person sees (the first visible one).
   */
  sheet(name: string | undefined): Worksheet | undefined {
    if (name === undefined) return this.sheets.find((sheet) => sheet.state === 'visible') ?? this.sheets[0];
    const wanted = name.trim().toLowerCase();
    return this.sheets.find((sheet) => sheet.name.trim().toLowerCase() === wanted);
  }

  /** True when no cell of any sheet holds a value. */
  isBlank(): boolean {
    for (const sheet of this.sheets) {
      for (let rowNumber = 1; rowNumber <= sheet.rowCount; rowNumber++) {
        if (this.rowText(sheet, rowNumber)?.some((cell) => cell.trim() !== '')) return false;
      }
    }
    return true;
  }

  /** One row's cells as text (formulas without a result as ''), or undefined for a row with no cells. */
  rowText(sheet: Worksheet, rowNumber: number): string[] | undefined {
    const row = sheet.findRow(rowNumber);
    if (row === undefined) return undefined;
    const cells: string[] = [];
    const how: CellReading = { decimal: '.', asDate: false, date1904: this.date1904 };
    for (let column = 1; column <= row.cellCount; column++)
      cells.push(cellText(row.findCell(column)?.value, how) ?? '');
    return cells;
  }

  /**
   * The rows below the header, `width` cells each (cells past the header's last column are not
   * read: in a sheet they cannot shift into another column, unlike a CSV field). Rows with no
   * text are skipped. A formula without a cached result in a column listed in `needed` names
   * its column in `uncalculated`; elsewhere it reads as blank.
   */
  *rows(sheet: Worksheet, headerRow: number, width: number, read: SheetReading): Generator<SheetRow> {
    const last = sheet.rowCount;
    for (let rowNumber = headerRow + 1; rowNumber <= last; rowNumber++) {
      const row = sheet.findRow(rowNumber);
      if (row === undefined) continue;
      const cells: string[] = new Array<string>(width);
      const uncalculated: number[] = [];
      let blank = true;
      for (let column = 0; column < width; column++) {
        const cell: Cell | undefined = column < row.cellCount ? row.findCell(column + 1) : undefined;
        const how = read.dateColumns.has(column) ? read.asDate : read.asText;
        const text = cellText(cell?.value, how);
        if (text === undefined && read.needed.has(column)) {
          uncalculated.push(column);
          blank = false;
        }
        cells[column] = text ?? '';
        if (blank && text !== undefined && text.trim() !== '') blank = false;
      }
      if (!blank) yield { line: rowNumber, cells, uncalculated };
    }
  }
}

export interface SheetReading {
  /** Columns (0-based) whose numbers are serial dates. */
  dateColumns: ReadonlySet<number>;
  /** Columns the mapping reads: a formula without its value there refuses the row. */
  needed: ReadonlySet<number>;
  asText: CellReading;
  asDate: CellReading;
}

export interface SheetRow {
  /** The sheet's row number (what the receipt calls the line). */
  line: number;
  cells: string[];
  /** Needed columns (0-based) holding a formula saved without its value. */
  uncalculated: number[];
}
