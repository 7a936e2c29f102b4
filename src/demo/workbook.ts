/**
 * Excel workbooks for the demo, written with exceljs and made deterministic: the same sheets at
 * the same moment give the same bytes, whenever they are written. exceljs stamps the workbook's
 * creation and modification dates (docProps/core.xml) and its zip writer stamps every entry with
 * the clock's time, so both are set to the moment given: the first through the workbook's
 * properties, the second by rewriting each entry's MS-DOS date and time in its local and central
 * headers (PKWARE APPNOTE.TXT 6.3.x, 4.3.7 and 4.3.12; format in 4.4.6). The headers are outside
 * what the CRC covers, so the archive stays valid.
 */
import type { CellValue } from 'exceljs';
import { zipEntries } from '../ingest/zipDirectory.js';

export interface DemoSheet {
  name: string;
  rows: readonly (readonly CellValue[])[];
  /** Columns (1-based) shown as dates (yyyy-mm-dd). */
  dateColumns?: readonly number[];
  /** Column widths in characters, for a person who opens the file. */
  widths?: readonly number[];
}

/** An MS-DOS date and time (2-second resolution, years from 1980), from a moment's UTC fields. */
export function dosDateTime(at: Date): { date: number; time: number } {
  return {
    date: ((at.getUTCFullYear() - 1980) << 9) | ((at.getUTCMonth() + 1) << 5) | at.getUTCDate(),
    time: (at.getUTCHours() << 11) | (at.getUTCMinutes() << 5) | Math.floor(at.getUTCSeconds() / 2),
  };
}

/** Sets every entry's modification date and time, in its local and its central header, to `at`. */
export function stampZipEntries(bytes: Buffer, at: Date): Buffer {
  const out = Buffer.from(bytes);
  const { date, time } = dosDateTime(at);
  for (const entry of zipEntries(out, Number.MAX_SAFE_INTEGER)) {
    out.writeUInt16LE(time, entry.localHeaderOffset + 10);
    out.writeUInt16LE(date, entry.localHeaderOffset + 12);
    out.writeUInt16LE(time, entry.directoryOffset + 12);
    out.writeUInt16LE(date, entry.directoryOffset + 14);
  }
  return out;
}

/** The sheets as an .xlsx workbook created and last saved at `at`; the same arguments give the same bytes. */
export async function demoWorkbook(sheets: readonly DemoSheet[], at: Date, creator: string): Promise<Buffer> {
  // Loaded here: the demo's other files and every other command do without exceljs.
  const { default: ExcelJS } = await import('exceljs');
  const book = new ExcelJS.Workbook();
  book.creator = creator;
  book.lastModifiedBy = creator;
  book.created = at;
  book.modified = at;
  for (const spec of sheets) {
    const sheet = book.addWorksheet(spec.name);
    for (const row of spec.rows) sheet.addRow([...row]);
    for (const column of spec.dateColumns ?? []) sheet.getColumn(column).numFmt = 'yyyy-mm-dd';
    spec.widths?.forEach((width, index) => (sheet.getColumn(index + 1).width = width));
  }
  return stampZipEntries(Buffer.from(await book.xlsx.writeBuffer()), at);
}
