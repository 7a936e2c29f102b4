/**
 * The zip directory read before a workbook is unpacked. Archives come from test/helpers/zipFile.ts
 * (written from PKWARE APPNOTE.TXT 6.3.x) and from exceljs's writer (JSZip); the expected entries
 * and sizes are those the archives were written with.
 */
import { deflateRawSync } from 'node:zlib';
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { checkUnpackedSizes, ZipProblem, zipEntries } from '../../src/ingest/zipDirectory.js';
import { crc32, zipFile } from '../helpers/zipFile.js';

function problem(run: () => unknown): ZipProblem {
  try {
    run();
  } catch (error) {
    if (error instanceof ZipProblem) return error;
    throw error;
  }
  throw new Error('expected a ZipProblem');
}

describe('the test zip writer', () => {
  it('computes CRC-32 as APPNOTE 4.4.7 specifies', () => {
    // The CRC-32 check value of "123456789" is 0xCBF43926 (Williams, "A painless guide to CRC error detection algorithms", 1993).
    expect(crc32(Buffer.from('123456789'))).toBe(0xcbf43926);
  });
});

describe('zipEntries', () => {
  it('lists the entries with their method and sizes, stored and deflated', () => {
    const text = 'sample,ct\n'.repeat(100);
    const bytes = zipFile([
      { name: 'a.txt', data: 'hello', method: 0 },
      { name: 'dir/b.csv', data: text },
    ]);
    const entries = zipEntries(bytes, 10);
    expect(entries.map(({ name, method, uncompressedSize }) => ({ name, method, uncompressedSize }))).toEqual([
      { name: 'a.txt', method: 0, uncompressedSize: 5 },
      { name: 'dir/b.csv', method: 8, uncompressedSize: text.length },
    ]);
    expect(entries[1]!.compressedSize).toBe(deflateRawSync(Buffer.from(text)).length);
    expect(() => checkUnpackedSizes(bytes, entries, 10_000)).not.toThrow();
  });

  it('reads the sizes and offset from a zip64 extra field (APPNOTE 4.5.3)', () => {
    const bytes = zipFile([
      { name: 'first', data: 'x'.repeat(50), method: 0 },
      { name: 'xl/workbook.xml', data: '<workbook/>', zip64: true },
    ]);
    const [first, second] = zipEntries(bytes, 10);
    expect(second).toMatchObject({
      name: 'xl/workbook.xml',
      uncompressedSize: 11,
      localHeaderOffset: 30 + 'first'.length + 50,
    });
    expect(first!.uncompressedSize).toBe(50);
    expect(() => checkUnpackedSizes(bytes, [first!, second!], 1000)).not.toThrow();
  });

  it('finds the parts of a workbook that exceljs writes', async () => {
    const workbook = new ExcelJS.Workbook();
    workbook.addWorksheet('Results').addRow(['Sample ID', 'Ct Value']);
    const bytes = Buffer.from(await workbook.xlsx.writeBuffer());
    const entries = zipEntries(bytes, 100);
    // ECMA-376 Part 1, 12.2 (package structure as exceljs lays it out): the workbook part and a worksheet.
    expect(entries.map((entry) => entry.name)).toEqual(
      expect.arrayContaining(['[Content_Types].xml', 'xl/workbook.xml', 'xl/worksheets/sheet1.xml']),
    );
    expect(() => checkUnpackedSizes(bytes, entries, 64 * 1024 * 1024)).not.toThrow();
  });

  it('refuses bytes that are no zip, and a directory that runs outside the file', () => {
    expect(problem(() => zipEntries(Buffer.from('Sample ID,Ct Value\nA-1,31.5\n'), 10)).kind).toBe('not-zip');
    expect(problem(() => zipEntries(Buffer.alloc(5), 10)).kind).toBe('not-zip');
    const bytes = zipFile([{ name: 'a', data: 'abc' }]);
    // Cut the file before its directory but keep its end record: the directory lies past the end.
    const end = bytes.subarray(bytes.length - 22);
    expect(problem(() => zipEntries(Buffer.concat([bytes.subarray(0, 10), end]), 10)).kind).toBe('damaged');
  });

  it('refuses an archive with more entries than allowed', () => {
    const bytes = zipFile(Array.from({ length: 5 }, (_, index) => ({ name: `p${index}`, data: 'x' })));
    const refused = problem(() => zipEntries(bytes, 4));
    expect(refused.kind).toBe('too-large');
    expect(refused.message).toContain('5 parts');
  });
});

describe('checkUnpackedSizes', () => {
  it('refuses parts that together declare more than the limit, before unpacking any', () => {
    const bytes = zipFile([
      { name: 'a', data: 'x'.repeat(600) },
      { name: 'b', data: 'y'.repeat(600) },
    ]);
    const refused = problem(() => checkUnpackedSizes(bytes, zipEntries(bytes, 10), 1000));
    expect(refused.kind).toBe('too-large');
  });

  it('catches a part that unpacks to more than it declares (a zip bomb with a lying size)', () => {
    // 8 MB of zeros deflates to about 8 KB; the directory claims 100 bytes.
    const bytes = zipFile([
      { name: 'xl/worksheets/sheet1.xml', data: Buffer.alloc(8 * 1024 * 1024), declaredSize: 100 },
    ]);
    const refused = problem(() => checkUnpackedSizes(bytes, zipEntries(bytes, 10), 1000));
    expect(refused.kind).toBe('damaged');
    expect(refused.message).toMatch(/unpacks to more bytes than its declared 100/);
  });

  it('catches a part that unpacks to fewer bytes than it declares, and a stored part whose sizes differ', () => {
    const short = zipFile([{ name: 'a', data: 'abc', declaredSize: 10 }]);
    expect(problem(() => checkUnpackedSizes(short, zipEntries(short, 10), 1000)).message).toMatch(
      /fewer bytes than its declared 10/,
    );
    const stored = zipFile([{ name: 'a', data: 'abc', method: 0, declaredSize: 4 }]);
    expect(problem(() => checkUnpackedSizes(stored, zipEntries(stored, 10), 1000)).kind).toBe('damaged');
  });

  it('refuses an entry encrypted at the zip level and a deflate stream that is not one', () => {
    const encrypted = zipFile([{ name: 'a', data: 'abc', flags: 1 }]);
    expect(problem(() => checkUnpackedSizes(encrypted, zipEntries(encrypted, 10), 1000)).message).toMatch(/encrypted/);
    const garbage = zipFile([{ name: 'a', data: 'abc' }]);
    // Overwrite the packed bytes (after the 30-byte header and the 1-byte name) with an invalid deflate block type (APPNOTE defers to RFC 1951: BTYPE 11 is reserved).
    garbage[31] = 0xff;
    expect(problem(() => checkUnpackedSizes(garbage, zipEntries(garbage, 10), 1000)).kind).toBe('damaged');
  });
});
