/**
 * Receipts add up for results whose sample IDs carry their location (demo site Tamsin Ridge,
 * pattern '^TR-(?<barn>N[12])-(?<pen>\d{1,2})-(?<date>\d{8})$'; barn N1 has pens 1..24): every
 * data row is counted once, as stored, refused or already stored, and no stored result is left
 * without a pen. One rope per pen per day (common practice, no source: a pen's oral fluid is
 * one rope), so `TR-N1-01-20261101` and `TR-N1-1-20261101`, one pen written two ways, are one
 * rope named by two sample IDs: the first is stored and placed, the second refused and not stored.
 */
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import type { Receipt } from '../../src/ingest/ingestFile.js';
import { workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
const DAY = '2026-11-01';

type LabRow = Parameters<typeof northfieldExport>[0][number];
const prrsv = (sampleId: string, ct: number | null): LabRow => ({ sampleId, assay: 'PRRSV', ct, collectedOn: DAY });
const iav = (sampleId: string, ct: number | null): LabRow => ({ sampleId, assay: 'IAV', ct, collectedOn: DAY });

/** Stored + refused + already stored = data rows (by hand: one count per line after the header). */
function expectCountsAddUp(receipt: Receipt, dataRows: number): void {
  expect(receipt.rows.accepted + receipt.rows.rejected + receipt.rows.duplicate).toBe(dataRows);
}

/** Results in the store that no rope places: none may be left behind. */
function unplacedResults(ws: TestWorkspace): number {
  return ws
    .sql()
    .get<{ n: number }>(
      'SELECT COUNT(*) AS n FROM results r WHERE NOT EXISTS (SELECT 1 FROM ropes h WHERE h.sample = r.sample)',
    )!.n;
}

const storedSampleIds = (ws: TestWorkspace) =>
  ws
    .sql()
    .all<{ id: string }>(
      'SELECT DISTINCT s.sample_id AS id FROM results r JOIN samples s ON s.id = r.sample ORDER BY 1',
    )
    .map((row) => row.id);

describe('location-coded sample IDs naming one pen twice on one day', () => {
  it('stores and places the first, refuses the second without storing it: 1 stored, 1 refused for 2 rows', async () => {
    const ws = workspace();
    const { receipt } = await ws.drop(
      'nvdl_tr.csv',
      northfieldExport([prrsv('TR-N1-01-20261101', null), prrsv('TR-N1-1-20261101', 29.5)], '2026-11-04', 1),
    );
    expect(receipt.rows).toMatchObject({ accepted: 1, rejected: 1, duplicate: 0 });
    expectCountsAddUp(receipt, 2);
    // Line 1 is the header: the second ID is on line 3, in the lab's "Sample ID" column.
    expect(receipt.rejectedRows).toEqual([
      expect.objectContaining({
        line: 3,
        code: 'pen-twice-same-day',
        field: 'Sample ID',
        value: 'TR-N1-1-20261101',
        message: expect.stringContaining('TR-N1-01-20261101'),
      }),
    ]);
    expect(storedSampleIds(ws)).toEqual(['TR-N1-01-20261101']);
    expect(
      ws
        .ws()
        .store.ropes('tamsin-ridge')
        .map((rope) => [rope.sampleId, rope.barnId, rope.penId, rope.hungOn]),
    ).toEqual([['TR-N1-01-20261101', 'N1', '1', DAY]]);
    expect(unplacedResults(ws)).toBe(0);
    expect(receipt.unresolvedSampleIds).toEqual([]);
    expect(ws.ws().store.unresolvedSampleIds()).toEqual([]);
    // The refusal is kept with its file, line and code (nothing lost).
    expect(ws.ws().store.counts()).toMatchObject({ results: 1, ropes: 1, rejectedRows: 1 });
  });

  it('refuses every assay row of the second sample, and counts each row once', async () => {
    const ws = workspace();
    const rows = [
      prrsv('TR-N1-07-20261101', null),
      iav('TR-N1-07-20261101', null),
      prrsv('TR-N1-7-20261101', 30.1),
      iav('TR-N1-7-20261101', null),
    ];
    const { receipt } = await ws.drop('nvdl_tr.csv', northfieldExport(rows, '2026-11-04', 1));
    expect(receipt.rows).toMatchObject({ accepted: 2, rejected: 2, duplicate: 0 });
    expectCountsAddUp(receipt, 4);
    expect(receipt.rejectedRows.map((row) => [row.line, row.code])).toEqual([
      [4, 'pen-twice-same-day'],
      [5, 'pen-twice-same-day'],
    ]);
    expect(storedSampleIds(ws)).toEqual(['TR-N1-07-20261101']);
    expect(unplacedResults(ws)).toBe(0);
  });

  it('refuses the second ID when it arrives in a later file, and a re-sent first file is already stored', async () => {
    const ws = workspace();
    const first = northfieldExport([prrsv('TR-N2-03-20261101', null)], '2026-11-04', 1);
    expect((await ws.drop('nvdl_a.csv', first)).receipt.rows).toMatchObject({ accepted: 1, rejected: 0 });
    const { receipt } = await ws.drop(
      'nvdl_b.csv',
      northfieldExport([prrsv('TR-N2-3-20261101', 31), prrsv('TR-N2-04-20261101', null)], '2026-11-05', 7),
    );
    expect(receipt.rows).toMatchObject({ accepted: 1, rejected: 1, duplicate: 0 });
    expectCountsAddUp(receipt, 2);
    expect(receipt.rejectedRows).toEqual([
      expect.objectContaining({ line: 2, code: 'pen-twice-same-day', value: 'TR-N2-3-20261101' }),
    ]);
    expect(storedSampleIds(ws)).toEqual(['TR-N2-03-20261101', 'TR-N2-04-20261101']);
    expect(unplacedResults(ws)).toBe(0);
    // The first report again (same case, date and Ct) beside a new row: already stored, not refused.
    const again = await ws.drop(
      'nvdl_c.csv',
      northfieldExport([prrsv('TR-N2-03-20261101', null), prrsv('TR-N2-05-20261101', null)], '2026-11-04', 1),
    );
    expect(again.receipt.rows).toMatchObject({ accepted: 1, rejected: 0, duplicate: 1 });
    expectCountsAddUp(again.receipt, 2);
    expect(unplacedResults(ws)).toBe(0);
  });

  it('refuses a result whose encoded pen holds a rope-sheet sample that day', async () => {
    const ws = workspace();
    const site = ws.config().siteById.get('TAMSIN-RIDGE')!;
    await ws.drop('ropes.csv', ropeSheet(site, [{ sampleId: 'FARM-1', barnId: 'N1', penId: '5', hungOn: DAY }]));
    const { receipt } = await ws.drop(
      'nvdl_tr.csv',
      northfieldExport([prrsv('TR-N1-05-20261101', 28)], '2026-11-04', 1),
    );
    expect(receipt.rows).toMatchObject({ accepted: 0, rejected: 1 });
    expect(receipt.rejectedRows[0]).toMatchObject({
      code: 'pen-twice-same-day',
      message: expect.stringContaining('FARM-1'),
    });
    expect(storedSampleIds(ws)).toEqual([]);
  });

  it('places a result where its rope sheet hung it, with a warning when its ID names another day, and refuses nothing', async () => {
    const ws = workspace();
    const site = ws.config().siteById.get('TAMSIN-RIDGE')!;
    // The label was printed for 1 November; the farm hung it on the 2nd and said so on its sheet.
    await ws.drop(
      'ropes.csv',
      ropeSheet(site, [{ sampleId: 'TR-N1-09-20261101', barnId: 'N1', penId: '9', hungOn: '2026-11-02' }]),
    );
    const { receipt } = await ws.drop(
      'nvdl_tr.csv',
      northfieldExport([prrsv('TR-N1-09-20261101', 33), iav('TR-N1-09-20261101', null)], '2026-11-05', 1),
    );
    expect(receipt.rows).toMatchObject({ accepted: 2, rejected: 0 });
    expectCountsAddUp(receipt, 2);
    // One warning for the sample, not one per assay row.
    expect(receipt.warnings.filter((text) => text.includes('TR-N1-09-20261101'))).toHaveLength(1);
    expect(
      ws
        .ws()
        .store.ropes('tamsin-ridge')
        .map((rope) => [rope.penId, rope.hungOn]),
    ).toEqual([['9', '2026-11-02']]);
    expect(unplacedResults(ws)).toBe(0);
  });
});

describe('location-coded sample IDs naming a pen the barn lacks', () => {
  it('refuses the row as unknown-pen and stores nothing for it; the other rows go ahead', async () => {
    const ws = workspace();
    const { receipt } = await ws.drop(
      'nvdl_tr.csv',
      northfieldExport([prrsv('TR-N1-77-20261101', 27), prrsv('TR-N1-02-20261101', null)], '2026-11-04', 1),
    );
    expect(receipt.rows).toMatchObject({ accepted: 1, rejected: 1, duplicate: 0 });
    expectCountsAddUp(receipt, 2);
    expect(receipt.rejectedRows).toEqual([
      expect.objectContaining({ line: 2, code: 'unknown-pen', field: 'Sample ID', value: 'TR-N1-77-20261101' }),
    ]);
    expect(storedSampleIds(ws)).toEqual(['TR-N1-02-20261101']);
    expect(receipt.unresolvedSampleIds).toEqual([]);
    expect(unplacedResults(ws)).toBe(0);
  });
});
