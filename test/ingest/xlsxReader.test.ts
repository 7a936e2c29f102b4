/**
 * Workbook cells read into text, and the workbooks that cannot be opened. Serial dates follow
 * ECMA-376 Part 1, 18.17.4.1 (the 1900 system counts a 29 February 1900 that never was, serial
 * 60; the 1904 system starts at 1904-01-01 = 0, 1,462 days after the 1900 system's origin);
 * numbers are shown to 15 significant digits as Excel shows them ("Excel specifications and
 * limits": number precision 15 digits). Workbooks are written with exceljs; the expected texts
 * were worked out from those rules by hand.
 */
import { inflateRawSync } from 'node:zlib';
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { IngestError } from '../../src/ingest/errors.js';
import {
  cellText,
  isWorkbookFile,
  numberText,
  openWorkbook,
  serialDay,
  WORKBOOK_MAX_BYTES,
  type CellReading,
} from '../../src/ingest/xlsxReader.js';
import { entryDataOffset, zipEntries } from '../../src/ingest/zipDirectory.js';
import { zipFile, type ZipPart } from '../helpers/zipFile.js';

/** The parts of a zip, unpacked (a workbook exceljs wrote, to be altered and packed again). */
function unpack(bytes: Buffer): ZipPart[] {
  return zipEntries(bytes, 100)
    .filter((entry) => !entry.name.endsWith('/'))
    .map((entry) => {
      const start = entryDataOffset(bytes, entry);
      const packed = bytes.subarray(start, start + entry.compressedSize);
      return { name: entry.name, data: entry.method === 8 ? inflateRawSync(packed) : Buffer.from(packed) };
    });
}

const asText: CellReading = { decimal: '.', asDate: false, date1904: false };
const asDate: CellReading = { decimal: '.', asDate: true, date1904: false };

async function refusal(bytes: Buffer): Promise<IngestError> {
  try {
    await openWorkbook(bytes, 'book.xlsx');
  } catch (error) {
    if (error instanceof IngestError) return error;
    throw error;
  }
  throw new Error('expected an IngestError');
}

describe('serialDay', () => {
  it('reads the 1900 system with its phantom 29 February 1900', () => {
    // ECMA-376 Part 1, 18.17.4.1: serial 1 is 1900-01-01, 60 the non-existent 1900-02-29, 61 is 1900-03-01.
    expect(serialDay(1, false)).toBe('1900-01-01');
    expect(serialDay(59, false)).toBe('1900-02-28');
    expect(serialDay(60, false)).toBeUndefined();
    expect(serialDay(61, false)).toBe('1900-03-01');
    // 1900-03-01 + 46176 days: 2026-08-03 (hand count: 2026-01-01 is serial 46023, plus 212 days of January to July, plus 2).
    expect(serialDay(46237, false)).toBe('2026-08-03');
    // A time of day does not move the day.
    expect(serialDay(46237.99, false)).toBe('2026-08-03');
  });

  it('reads the 1904 system 1,462 days apart, from 1904-01-01 = 0', () => {
    expect(serialDay(0, true)).toBe('1904-01-01');
    expect(serialDay(46237 - 1462, true)).toBe('2026-08-03');
  });

  it('names no day outside Excel dates (before serial 1, after 9999-12-31)', () => {
    expect(serialDay(0, false)).toBeUndefined();
    expect(serialDay(-3, false)).toBeUndefined();
    // Excel specifications and limits: the latest date is 9999-12-31, serial 2,958,465.
    expect(serialDay(2_958_465, false)).toBe('9999-12-31');
    expect(serialDay(2_958_466, false)).toBeUndefined();
    expect(serialDay(20260803, false)).toBeUndefined();
  });
});

describe('cellText', () => {
  it('keeps a number as Excel shows it: 15 significant digits, in the lab decimal mark', () => {
    // 31.5 computed as 63/2 - 1e-15 is stored as 31.499999999999996; Excel shows 31.5.
    expect(numberText(31.499999999999996, '.')).toBe('31.5');
    expect(numberText(31.5, ',')).toBe('31,5');
    expect(numberText(28, '.')).toBe('28');
    expect(numberText(0.1 + 0.2, '.')).toBe('0.3');
    expect(cellText(38.12, asText)).toBe('38.12');
  });

  it('reads dates as ISO dates: date cells, serial numbers in a date column, date-times', () => {
    expect(cellText(new Date(Date.UTC(2026, 7, 3)), asText)).toBe('2026-08-03');
    expect(cellText(new Date(Date.UTC(2026, 7, 3, 10, 30)), asText)).toBe('2026-08-03T10:30:00');
    expect(cellText(new Date(Date.UTC(2026, 7, 3, 10, 30)), asDate)).toBe('2026-08-03');
    expect(cellText(46237, asDate)).toBe('2026-08-03');
    expect(cellText(46237 - 1462, { ...asDate, date1904: true })).toBe('2026-08-03');
    // A number outside Excel's dates in a date column stays a number, for the profile's date format (yyyyMMdd).
    expect(cellText(20260803, asDate)).toBe('20260803');
    // The same serial outside a date column is a number.
    expect(cellText(46237, asText)).toBe('46237');
  });

  it('reads formulas by their cached result, and knows one saved without it', () => {
    expect(cellText({ formula: 'B2*2', result: 63 }, asText)).toBe('63');
    expect(cellText({ sharedFormula: 'D2', result: 'Positive' }, asText)).toBe('Positive');
    expect(cellText({ formula: 'C2', result: new Date(Date.UTC(2026, 7, 3)) }, asDate)).toBe('2026-08-03');
    expect(cellText({ formula: 'NA()', result: { error: '#N/A' } }, asText)).toBe('#N/A');
    expect(cellText({ formula: 'B2*2' }, asText)).toBeUndefined();
  });

  it('reads rich text, hyperlinks, errors, booleans and empty cells as a person sees them', () => {
    expect(cellText({ richText: [{ text: 'PRRSV ' }, { text: 'RT-PCR', font: { bold: true } }] }, asText)).toBe(
      'PRRSV RT-PCR',
    );
    expect(cellText({ text: 'HC-0803-F1-01', hyperlink: 'https://lims.invalid/1' }, asText)).toBe('HC-0803-F1-01');
    expect(cellText({ error: '#DIV/0!' }, asText)).toBe('#DIV/0!');
    expect(cellText(true, asText)).toBe('TRUE');
    expect(cellText(null, asText)).toBe('');
    expect(cellText(undefined, asText)).toBe('');
    expect(cellText('Undetermined', asText)).toBe('Undetermined');
  });
});

describe('isWorkbookFile', () => {
  it('takes spreadsheet names, and zip or compound-file bytes under any name', () => {
    expect(isWorkbookFile('nvdl_r.xlsx', new Uint8Array())).toBe(true);
    expect(isWorkbookFile('nvdl_r.XLS', new Uint8Array())).toBe(true);
    expect(isWorkbookFile('nvdl_r.csv', Buffer.from('Case No,Sample ID'))).toBe(false);
    // APPNOTE.TXT 4.3.7: a zip starts with its first local header, "PK\x03\x04".
    expect(isWorkbookFile('nvdl_r.csv', Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x14]))).toBe(true);
    // [MS-CFB] 2.2: a compound file starts D0 CF 11 E0 A1 B1 1A E1.
    expect(isWorkbookFile('nvdl_r.csv', Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]))).toBe(true);
  });
});

describe('openWorkbook', () => {
  it('opens a workbook, finds sheets ignoring case, and defaults to the first visible sheet', async () => {
    const book = new ExcelJS.Workbook();
    book.addWorksheet('Notes', { state: 'hidden' }).addRow(['internal']);
    const results = book.addWorksheet('Results');
    results.addRow(['Sample ID', 'Ct Value']);
    results.addRow(['A-1', 31.5]);
    const opened = await openWorkbook(Buffer.from(await book.xlsx.writeBuffer()), 'book.xlsx');
    expect(opened.sheetNames).toEqual(['Notes', 'Results']);
    expect(opened.sheet(undefined)?.name).toBe('Results');
    expect(opened.sheet('results')?.name).toBe('Results');
    expect(opened.sheet('Summary')).toBeUndefined();
    expect(opened.rowText(opened.sheet('Results')!, 2)).toEqual(['A-1', '31.5']);
    expect(opened.isBlank()).toBe(false);
  });

  it('refuses CSV text under an .xlsx name as not a workbook', async () => {
    const refused = await refusal(Buffer.from('Sample ID,Ct Value\nA-1,31.5\n'));
    expect(refused.code).toBe('not-a-workbook');
    expect(refused.message).toMatch(/zip/);
  });

  it('tells a password-protected workbook from an old .xls', async () => {
    // [MS-CFB] 2.2 signature, then a directory entry name as [MS-OFFCRYPTO] 2.3.4.4 names the
    // encrypted package's stream (UTF-16LE, [MS-CFB] 2.6.1). A stand-in: no real cipher inside.
    const signature = Buffer.from([0xd0, 0xcf, 0x11, 0xe0, 0xa1, 0xb1, 0x1a, 0xe1]);
    const encrypted = Buffer.concat([
      signature,
      Buffer.alloc(504),
      Buffer.from('EncryptionInfo', 'utf16le'),
      Buffer.alloc(50),
      Buffer.from('EncryptedPackage', 'utf16le'),
      Buffer.alloc(400),
    ]);
    expect((await refusal(encrypted)).code).toBe('workbook-encrypted');
    const oldXls = Buffer.concat([signature, Buffer.alloc(504), Buffer.from('Workbook', 'utf16le'), Buffer.alloc(400)]);
    const refused = await refusal(oldXls);
    expect(refused.code).toBe('not-a-workbook');
    expect(refused.message).toMatch(/\.xls\b/);
  });

  it('names the format of a zip that is another spreadsheet or no workbook at all', async () => {
    // OpenDocument 1.2 Part 3, 3.3: an ODF package starts with a "mimetype" entry; content.xml holds the document.
    const ods = zipFile([
      { name: 'mimetype', data: 'application/vnd.oasis.opendocument.spreadsheet', method: 0 },
      { name: 'content.xml', data: '<office:document-content/>' },
    ]);
    expect((await refusal(ods)).message).toMatch(/\.ods/);
    const xlsb = zipFile([
      { name: '[Content_Types].xml', data: '<Types/>' },
      { name: 'xl/workbook.bin', data: Buffer.alloc(10) },
    ]);
    expect((await refusal(xlsb)).message).toMatch(/\.xlsb/);
    const other = zipFile([{ name: 'report.pdf', data: '%PDF-1.7' }]);
    const refused = await refusal(other);
    expect(refused.code).toBe('not-a-workbook');
    expect(refused.message).toMatch(/no xl\/workbook\.xml/);
  });

  it('refuses a workbook over the size limit, and one whose parts unpack past it, before exceljs unpacks them', async () => {
    expect((await refusal(Buffer.alloc(WORKBOOK_MAX_BYTES + 1))).code).toBe('workbook-too-large');
    // 65 MB of one repeated XML text deflates to well under a megabyte.
    const bomb = zipFile([
      { name: 'xl/workbook.xml', data: '<workbook/>' },
      { name: 'xl/worksheets/sheet1.xml', data: Buffer.alloc(65 * 1024 * 1024, 0x20) },
    ]);
    expect(bomb.length).toBeLessThan(1024 * 1024);
    const refused = await refusal(bomb);
    expect(refused.code).toBe('workbook-too-large');
    expect(refused.message).toMatch(/unpack to 66 MB \(at most 64 MB/);
  });

  it('refuses a workbook whose XML declares entities that expand ("billion laughs") instead of expanding them', async () => {
    const book = new ExcelJS.Workbook();
    book.addWorksheet('Results').addRow(['Sample ID']);
    const parts = unpack(Buffer.from(await book.xlsx.writeBuffer()));
    expect(parts.map((part) => part.name)).toContain('xl/sharedStrings.xml');
    // Packed again unaltered, the parts open: what is refused below is the entities alone.
    expect((await openWorkbook(zipFile(parts), 'book.xlsx')).sheetNames).toEqual(['Results']);
    // Nine levels of ten: 10^9 copies of "lol" if a parser expanded them (the classic form of the attack).
    const levels = Array.from(
      { length: 8 },
      (_, index) => `<!ENTITY l${index + 2} "${`&l${index + 1};`.repeat(10)}">`,
    ).join('');
    const strings = `<?xml version="1.0"?><!DOCTYPE sst [<!ENTITY l1 "lol">${levels}]><sst xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main" count="1" uniqueCount="1"><si><t>&l9;</t></si></sst>`;
    const evil = zipFile(
      parts.map((part) => (part.name === 'xl/sharedStrings.xml' ? { ...part, data: strings } : part)),
    );
    const refused = await refusal(evil);
    expect(refused.code).toBe('not-a-workbook');
    expect(refused.message).toMatch(/entity/);
  });

  it('refuses a zip whose sizes lie as damaged, and a workbook part exceljs cannot parse', async () => {
    const lying = zipFile([{ name: 'xl/workbook.xml', data: Buffer.alloc(2 * 1024 * 1024, 0x20), declaredSize: 10 }]);
    expect(await refusal(lying)).toMatchObject({ code: 'not-a-workbook' });
    const broken = zipFile([
      {
        name: 'xl/workbook.xml',
        data: '<workbook><sheets><sheet name="x" sheetId="1" r:id="rId1"/></sheets></workbook>',
      },
    ]);
    expect((await refusal(broken)).code).toBe('not-a-workbook');
  });
});
