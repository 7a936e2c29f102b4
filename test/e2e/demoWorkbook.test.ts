/**
 * The demo's Excel workbook: the same rows give the same bytes whatever the clock says when it is
 * written (the demo must be byte-identical between runs), and ropewatch reads it through the
 * demo's Northfield profile (sheet "Results", header on row 3). MS-DOS date and time fields
 * follow PKWARE APPNOTE.TXT 4.4.6 (date: years since 1980 << 9 | month << 5 | day; time:
 * hours << 11 | minutes << 5 | seconds / 2), computed by hand below.
 */
import { afterEach, describe, expect, it, vi } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { HOLLOW_CREEK_ROUNDS, hollowCreekRound, northfieldWorkbook } from '../../src/demo/scenario.js';
import { dosDateTime } from '../../src/demo/workbook.js';
import { zipEntries } from '../../src/ingest/zipDirectory.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
const rows = [
  { sampleId: 'HC-1029-F1-01', assay: 'PRRSV' as const, ct: 27.5, collectedOn: '2026-10-26' },
  { sampleId: 'HC-1029-F1-01', assay: 'IAV' as const, ct: null, collectedOn: '2026-10-26' },
];

afterEach(() => {
  vi.useRealTimers();
});

describe('the demo workbook', () => {
  it('encodes a moment as an MS-DOS date and time', () => {
    // 2026-10-29 13:00:00: (46 << 9) | (10 << 5) | 29 = 23901; 13 << 11 = 26624. 2026-10-29 13:04:59: 26624 | 4 << 5 | 29 = 26781.
    expect(dosDateTime(new Date('2026-10-29T13:00:00Z'))).toEqual({ date: 23901, time: 26624 });
    expect(dosDateTime(new Date('2026-10-29T13:04:59Z')).time).toBe(26781);
  });

  it('has the same bytes when written at two different times, every zip entry stamped with the moment given', async () => {
    vi.useFakeTimers({ toFake: ['Date'] });
    vi.setSystemTime(new Date('2031-03-04T05:06:07Z'));
    const first = await northfieldWorkbook(rows, '2026-10-29', 1600, '2026-10-29T13:00:00.000Z');
    vi.setSystemTime(new Date('2033-11-12T21:22:23Z'));
    const second = await northfieldWorkbook(rows, '2026-10-29', 1600, '2026-10-29T13:00:00.000Z');
    expect(second.equals(first)).toBe(true);
    const entries = zipEntries(first, 100);
    expect(entries.length).toBeGreaterThan(5);
    for (const entry of entries) {
      expect(
        [first.readUInt16LE(entry.localHeaderOffset + 10), first.readUInt16LE(entry.localHeaderOffset + 12)],
        entry.name,
      ).toEqual([26624, 23901]);
      expect(
        [first.readUInt16LE(entry.directoryOffset + 12), first.readUInt16LE(entry.directoryOffset + 14)],
        entry.name,
      ).toEqual([26624, 23901]);
    }
    // The workbook's own dates (docProps/core.xml) are the moment given, not the clock's.
    vi.useRealTimers();
    const { default: ExcelJS } = await import('exceljs');
    const book = new ExcelJS.Workbook();
    await book.xlsx.load(first as unknown as Parameters<typeof book.xlsx.load>[0]);
    expect(book.created.toISOString()).toBe('2026-10-29T13:00:00.000Z');
    expect(book.modified.toISOString()).toBe('2026-10-29T13:00:00.000Z');
  });

  it("is the last Hollow Creek round's results, read through the Northfield profile's sheet and header row", async () => {
    const ws = workspace();
    const last = HOLLOW_CREEK_ROUNDS.length - 1;
    const drops = await hollowCreekRound(loadConfig(DEMO_CONFIG_DIR), last, []);
    const book = drops.find((drop) => drop.name.endsWith('.xlsx'))!;
    expect(book.name).toBe('nvdl_results_2026-10-29.xlsx');
    const sheet = drops.find((drop) => drop.name.startsWith('hollow-creek_ropes'))!;
    await ws.drop(sheet.name, sheet.bytes);
    const { receipt } = await ws.drop(book.name, book.bytes);
    // Two assays per rope on the sheet; rows from row 4 (title, blank, header above).
    const ropes = sheet.bytes.toString('utf8').trim().split('\n').length - 1;
    expect(receipt).toMatchObject({
      status: 'accepted',
      lab: 'northfield',
      sheet: 'Results',
      rows: { accepted: 2 * ropes, rejected: 0 },
    });
    expect(ws.sql().get('SELECT MIN(line) AS first, MAX(line) AS last FROM results')).toEqual({
      first: 4,
      last: 3 + 2 * ropes,
    });
  });
});
