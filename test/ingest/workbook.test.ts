/**
 * Excel workbooks (.xlsx) through the whole ingest: the lab profile says which sheet and which
 * header row; rows are mapped as a CSV's are, one file in one transaction, with receipts that
 * name the sheet, the sheet's row number and the column. Workbooks are written with exceljs;
 * expected classes follow from the demo Northfield profile's cutoffs (PRRSV: positive below 36,
 * suspect below 40) by hand, and the CSV path (its records checked against csv-parse in
 * csvRecords.test.ts) is the reference a workbook of the same cells must match.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { northfieldExport } from '../../src/demo/scenario.js';
import { FileStillChangingError, ingestFile } from '../../src/ingest/ingestFile.js';
import { FileChangedError } from '../../src/ingest/mappedBatches.js';
import { readHashedBytes } from '../../src/ingest/workbookInput.js';
import type { Store } from '../../src/store/store.js';
import { FIXED_NOW, workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
const HEADER = [
  'Case No',
  'Sample ID',
  'Test Name',
  'Ct Value',
  'Interpretation',
  'Internal Control',
  'Collection Date',
  'Report Date',
  'Report Status',
];
const PRRSV = 'PRRSV NA/EU RT-PCR';
const day = (iso: string) => new Date(`${iso}T00:00:00Z`);
/** The demo Northfield profile without its workbook block (sheet "Results", header on row 3). */
const NORTHFIELD = fs
  .readFileSync(path.join(DEMO_CONFIG_DIR, 'labs', 'northfield.yaml'), 'utf8')
  .replace(/^workbook:\n(?: {2}.*\n)+/m, '');
/** A sheet as the demo Northfield profile reads it: "Results", a title and a blank row above the header. */
const results = (rows: ExcelJS.CellValue[][]) => ({ Results: [['Results report (invented)'], [], HEADER, ...rows] });

async function workbookBytes(sheets: Record<string, ExcelJS.CellValue[][]>): Promise<Buffer> {
  const book = new ExcelJS.Workbook();
  for (const [name, rows] of Object.entries(sheets)) {
    const sheet = book.addWorksheet(name);
    for (const row of rows) sheet.addRow(row);
  }
  return Buffer.from(await book.xlsx.writeBuffer());
}

type Stored = {
  id: string;
  line: number;
  assay: string;
  ct: number | null;
  class: string;
  collected: string | null;
  reported: string | null;
};
const stored = (ws: TestWorkspace): Stored[] =>
  ws
    .sql()
    .all<Stored>(
      'SELECT s.sample_id AS id, r.line, r.assay_id AS assay, r.ct, r.class, r.collected_on AS collected, r.reported_on AS reported FROM results_read r JOIN samples s ON s.id = r.sample ORDER BY r.line, r.assay_id',
    );

describe('a lab workbook read through its lab profile', () => {
  it('reads the sheet and header row the profile names: sheet row numbers as lines, refusals naming the column, values as the lab wrote them', async () => {
    const ws = workspace({
      configFiles: { 'labs/northfield.yaml': `${NORTHFIELD}workbook:\n  sheet: Befunde\n  headerRow: 3\n` },
    });
    const bytes = await workbookBytes({
      Cover: [['Northfield results, invented'], ['not data']],
      Befunde: [
        ['Results report'],
        [],
        HEADER,
        [
          'NV26-1',
          'WB-1',
          PRRSV,
          31.499999999999996,
          'Positive',
          'PASS',
          day('2026-08-03'),
          day('2026-08-06'),
          'Final',
        ],
        ['NV26-1', 'WB-2', PRRSV, 'Undetermined', 'Negative', 'PASS', day('2026-08-03'), day('2026-08-06'), 'Final'],
        [],
        [
          'NV26-1',
          'WB-3',
          PRRSV,
          { formula: 'D4+6.6', result: 38.1 },
          'Suspect',
          'PASS',
          day('2026-08-03'),
          day('2026-08-06'),
          'Final',
        ],
        ['NV26-1', 'WB-4', PRRSV, 'abc', 'Positive', 'PASS', day('2026-08-03'), day('2026-08-06'), 'Final'],
        [
          'NV26-1',
          'WB-5',
          PRRSV,
          { formula: 'D4/0' },
          'Positive',
          'PASS',
          day('2026-08-03'),
          day('2026-08-06'),
          'Final',
        ],
        // Dates as Excel serial numbers without a date format, and a date-time.
        ['NV26-1', 'WB-6', PRRSV, 33, 'Positive', 'PASS', 46237, new Date('2026-08-06T14:30:00Z'), 'Final'],
      ],
    });
    const { receipt } = await ws.drop('nvdl_results_2026-08-06.xlsx', bytes);
    expect(receipt).toMatchObject({
      status: 'accepted',
      kind: 'results',
      lab: 'northfield',
      sheet: 'Befunde',
      rows: { accepted: 4, rejected: 2 },
    });
    expect(receipt.encoding).toBe('Office Open XML workbook (.xlsx), sheet "Befunde", header on row 3');
    expect(receipt.rejectedRows.map(({ line, field, code, value }) => ({ line, field, code, value }))).toEqual([
      { line: 8, field: 'Ct Value', code: 'bad-ct', value: 'abc' },
      { line: 9, field: 'Ct Value', code: 'formula-without-value', value: undefined },
    ]);
    // 31.499999999999996 is shown as 31.5 (15 significant digits): positive below 36; 38.1 suspect; serial 46237 is 2026-08-03.
    expect(stored(ws)).toEqual([
      {
        id: 'WB-1',
        line: 4,
        assay: 'PRRSV',
        ct: 31.5,
        class: 'positive',
        collected: '2026-08-03',
        reported: '2026-08-06',
      },
      {
        id: 'WB-2',
        line: 5,
        assay: 'PRRSV',
        ct: null,
        class: 'negative',
        collected: '2026-08-03',
        reported: '2026-08-06',
      },
      {
        id: 'WB-3',
        line: 7,
        assay: 'PRRSV',
        ct: 38.1,
        class: 'suspect',
        collected: '2026-08-03',
        reported: '2026-08-06',
      },
      {
        id: 'WB-6',
        line: 10,
        assay: 'PRRSV',
        ct: 33,
        class: 'positive',
        collected: '2026-08-03',
        reported: '2026-08-06',
      },
    ]);
    // Nothing lost: both refused rows are kept with the file.
    expect(ws.ws().store.counts()).toMatchObject({ files: 1, rejectedRows: 2, results: 4 });
  });

  it('stores the same results from a workbook as from the CSV export of the same cells', async () => {
    type LabRow = Parameters<typeof northfieldExport>[0][number];
    const rows: LabRow[] = [
      { sampleId: 'EQ-1', assay: 'PRRSV', ct: 28.4, collectedOn: '2026-08-03' },
      { sampleId: 'EQ-1', assay: 'IAV', ct: null, collectedOn: '2026-08-03' },
      { sampleId: 'EQ-2', assay: 'PRRSV', ct: null, controlFailed: true, collectedOn: '2026-08-03' },
      { sampleId: 'EQ-3', assay: 'PRRSV', ct: 37.25, status: 'Corrected', collectedOn: '2026-08-04' },
    ];
    const csv = northfieldExport(rows, '2026-08-06', 100);
    // The same cells in a sheet: numbers as numbers, dates as date cells.
    const cells = csv
      .toString('utf8')
      .trim()
      .split('\n')
      .map((line) => line.split(','))
      .map((row, index) =>
        index === 0
          ? row
          : row.map((cell, column) =>
              column === 3 && /^\d/.test(cell) ? Number(cell) : column >= 6 && column <= 7 ? day(cell) : cell,
            ),
      );
    const fromCsv = workspace();
    const fromBook = workspace();
    const csvReceipt = (await fromCsv.drop('nvdl_same.csv', csv)).receipt;
    const bookReceipt = (await fromBook.drop('nvdl_same.xlsx', await workbookBytes(results(cells.slice(1))))).receipt;
    expect(bookReceipt.rows).toEqual(csvReceipt.rows);
    // The sheet's rows start on row 4, the CSV's on line 2.
    const shifted = (list: { line: number }[] | undefined) =>
      (list ?? []).map((item) => ({ ...item, line: item.line - 2 }));
    expect(shifted(bookReceipt.invalidRows)).toEqual(csvReceipt.invalidRows);
    expect(stored(fromBook).map((row) => ({ ...row, line: row.line - 2 }))).toEqual(stored(fromCsv));
    expect(stored(fromBook)).toHaveLength(4);
  });

  it('refuses a workbook from a lab whose sheet is not in it, listing the sheets it has, and stores nothing of it', async () => {
    // The demo Northfield profile reads sheet "Results".
    const ws = workspace();
    const bytes = await workbookBytes({
      Summary: [HEADER, ['NV26-1', 'X-1', PRRSV, 30, 'Positive', 'PASS', '2026-08-03', '2026-08-06', 'Final']],
      Raw: [['x']],
    });
    const { receipt } = await ws.drop('nvdl_results.xlsx', bytes);
    expect(receipt.status).toBe('rejected');
    expect(receipt.reason).toMatchObject({ code: 'no-such-sheet', line: null });
    expect(receipt.reason?.message).toContain(
      'reads sheet "Results", which the workbook does not have (its sheets: "Summary", "Raw")',
    );
    expect(ws.ws().store.counts()).toMatchObject({ files: 1, rejectedFiles: 1, results: 0, rejectedRows: 0 });
    expect(fs.existsSync(path.join(ws.paths.inbox, 'rejected', 'nvdl_results.xlsx'))).toBe(true);
  });

  it('refuses text named .xlsx, an empty workbook, and one with a header but no rows', async () => {
    const ws = workspace();
    const renamed = await ws.drop(
      'nvdl_renamed.xlsx',
      `${HEADER.join(',')}\nNV26-1,X-1,${PRRSV},30,Positive,PASS,2026-08-03,2026-08-06,Final\n`,
    );
    expect(renamed.receipt.reason?.code).toBe('not-a-workbook');
    const empty = await ws.drop('nvdl_empty.xlsx', await workbookBytes({ Results: [] }));
    expect(empty.receipt.reason?.code).toBe('empty-file');
    const headerOnly = await ws.drop('nvdl_header.xlsx', await workbookBytes(results([])));
    expect(headerOnly.receipt.reason).toMatchObject({ code: 'empty-file', line: 3 });
    expect(ws.ws().store.counts()).toMatchObject({ results: 0, rejectedFiles: 3 });
  });

  it('takes the same workbook bytes twice as a duplicate', async () => {
    const ws = workspace();
    const bytes = await workbookBytes(
      results([['NV26-1', 'D-1', PRRSV, 30, 'Positive', 'PASS', '2026-08-03', '2026-08-06', 'Final']]),
    );
    expect((await ws.drop('nvdl_a.xlsx', bytes)).receipt.status).toBe('accepted');
    expect((await ws.drop('nvdl_b.xlsx', bytes)).receipt).toMatchObject({
      status: 'duplicate',
      reason: { code: 'duplicate-file' },
    });
  });

  it('reads a rope sheet kept in a workbook: header on the first row of the first sheet, dates and pen numbers as cells', async () => {
    const ws = workspace();
    // Demo site Hollow Creek, barn F1 (per-row pens A1..A12, B1..B12).
    const bytes = await workbookBytes({
      Ropes: [
        ['sample_id', 'site', 'barn', 'pen', 'hung_on'],
        ['RS-1', 'hollow-creek', 'F1', 'A6', day('2026-08-03')],
        ['RS-2', 'hollow-creek', 'F1', 'B7', 46237],
      ],
    });
    const { receipt } = await ws.drop('ropes_2026-08-03.xlsx', bytes);
    expect(receipt).toMatchObject({ status: 'accepted', kind: 'ropes', sheet: 'Ropes', rows: { accepted: 2 } });
    expect(
      ws
        .ws()
        .store.ropes('hollow-creek')
        .map((rope) => [rope.sampleId, rope.penId, rope.hungOn]),
    ).toEqual([
      ['RS-1', 'A6', '2026-08-03'],
      ['RS-2', 'B7', '2026-08-03'],
    ]);
  });
});

describe('the file protocol for workbooks', () => {
  it('reads exactly the bytes hashed, and tells a file that changed since', () => {
    const ws = workspace();
    const file = path.join(ws.root, 'book.xlsx');
    fs.writeFileSync(file, 'abcdef');
    // The hash as Node's crypto gives it for the six bytes written.
    const sha256 = createHash('sha256').update('abcdef').digest('hex');
    expect(readHashedBytes(file, 'book.xlsx', { bytes: 6, sha256 }).toString()).toBe('abcdef');
    // Bytes appended after hashing are not read.
    fs.appendFileSync(file, 'gh');
    expect(readHashedBytes(file, 'book.xlsx', { bytes: 6, sha256 }).toString()).toBe('abcdef');
    fs.writeFileSync(file, 'abcxef');
    expect(() => readHashedBytes(file, 'book.xlsx', { bytes: 6, sha256 })).toThrow(FileChangedError);
    fs.writeFileSync(file, 'abc');
    expect(() => readHashedBytes(file, 'book.xlsx', { bytes: 6, sha256 })).toThrow(/6 bytes when hashed, 3 read/);
  });

  it('stores nothing of a workbook rewritten between its hash and its reading, and leaves it in the inbox', async () => {
    const ws = workspace();
    const file = path.join(ws.paths.inbox, 'nvdl_moving.xlsx');
    const bytes = await workbookBytes(
      results([['NV26-1', 'M-1', PRRSV, 30, 'Positive', 'PASS', '2026-08-03', '2026-08-06', 'Final']]),
    );
    fs.writeFileSync(file, bytes);
    const real = ws.ws().store;
    // A writer rewrites one byte (same size) while ingest looks the hash up, after hashing and before reading.
    const store = new Proxy(real, {
      get(target, property) {
        if (property === 'findFileByHash') {
          return (sha256: string) => {
            const changed = Buffer.from(bytes);
            changed[changed.length - 30] = changed[changed.length - 30]! ^ 0xff;
            fs.writeFileSync(file, changed);
            return target.findFileByHash(sha256);
          };
        }
        const value = Reflect.get(target, property) as unknown;
        return typeof value === 'function' ? (value as (...args: unknown[]) => unknown).bind(target) : value;
      },
    }) as Store;
    const outcome = await ingestFile(file, { config: ws.config(), store, now: () => FIXED_NOW }).catch(
      (error: unknown) => error,
    );
    expect(outcome).toBeInstanceOf(FileStillChangingError);
    // Caught where the workbook is read (the bytes differ from those hashed), before any row is mapped.
    expect((outcome as Error).message).toMatch(/no longer match the hash taken before reading\); nothing was stored/);
    expect(real.counts()).toMatchObject({ files: 0, results: 0 });
    expect(fs.existsSync(file)).toBe(true);
  });
});
