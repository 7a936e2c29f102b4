/**
 * Pooled ropes end to end through processFile: a rope sheet with a pool column, then the lab's
 * export reporting each pool under its pool ID. Expected counts are by hand from the rows written.
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { northfieldExport } from '../../src/demo/scenario.js';
import { SUMMARY_COLUMNS } from '../../src/report/summaryCsv.js';
import { foreignKeyProblems } from '../helpers/storeSql.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

// Hollow Creek barn F1: pool HC-P1 holds A1, A2, A3; pool HC-P2 holds A4, A5; B7 is tested on its own.
const SHEET = [
  'Sample ID,site,barn,pen,hung_on,Pool ID',
  'HC-0803-F1-01,hollow-creek,F1,A1,2026-08-03,HC-P1',
  'HC-0803-F1-02,hollow-creek,F1,A2,2026-08-03,HC-P1',
  'HC-0803-F1-03,hollow-creek,F1,A3,2026-08-03,hc-p1',
  'HC-0803-F1-04,hollow-creek,F1,A4,2026-08-03,HC-P2',
  'HC-0803-F1-05,hollow-creek,F1,A5,2026-08-03,HC-P2',
  'HC-0803-F1-06,hollow-creek,F1,B7,2026-08-03,',
  // Refused: a pool ID that is the rope's own sample ID.
  'HC-0803-F1-07,hollow-creek,F1,B8,2026-08-03,HC-0803-F1-07',
  // Refused: a pool ID that names a rope of this sheet.
  'HC-0803-F1-08,hollow-creek,F1,B9,2026-08-03,HC-0803-F1-06',
].join('\n');

const results = () =>
  northfieldExport(
    [
      { sampleId: 'HC-P1', assay: 'PRRSV', ct: 29.5, collectedOn: '2026-08-03' },
      { sampleId: 'HC-P2', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' },
      { sampleId: 'HC-0803-F1-06', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' },
    ],
    '2026-08-06',
    1,
  );

const roundDir = (root: string) => path.join(root, 'hollow-creek', 'r01-2026-08-03');

describe('pooled ropes end to end', () => {
  it('stores the pool of each rope, applies a pool result to every pen of the pool, and shows pooled and unpooled detection', async () => {
    const ws = workspace();
    const sheet = await ws.drop('hollow-creek_ropes.csv', SHEET);
    expect(sheet.receipt).toMatchObject({ status: 'accepted', kind: 'ropes', rows: { accepted: 6, rejected: 2 } });
    expect(sheet.receipt.rejectedRows.map((row) => [row.line, row.code, row.field])).toEqual([
      [8, 'bad-pool', 'Pool ID'],
      [9, 'bad-pool', 'pool'],
    ]);
    const lab = await ws.drop('nvdl_results_2026-08-06.csv', results());
    // The pool IDs are no unresolved samples: their ropes are on the sheet, and the site is rebuilt.
    expect(lab.receipt).toMatchObject({
      status: 'accepted',
      rows: { accepted: 3 },
      unresolvedSampleIds: [],
      sites: ['hollow-creek'],
    });
    expect(
      ws
        .ws()
        .store.ropes('hollow-creek')
        .filter((rope) => rope.poolId === 'HC-P1')
        .map((rope) => rope.penId),
    ).toEqual(['A1', 'A2', 'A3']);
    // Foreign keys hold after the file's transaction (they are not checked row by row inside it).
    expect(foreignKeyProblems(ws.ws().store)).toEqual([]);

    const summary = JSON.parse(fs.readFileSync(path.join(roundDir(ws.paths.outbox), 'summary.json'), 'utf8'));
    const f1 = summary.barns.find((barn: { barnId: string }) => barn.barnId === 'F1');
    // By hand: 6 ropes, all back through 2 pools and 1 rope; Ct 29.5 below the positive cutoff 36 makes HC-P1 positive.
    expect(f1).toMatchObject({ ropesHung: 6, ropesReturned: 6, missingSampleIds: [] });
    const prrsv = f1.assays.find((assay: { assayId: string }) => assay.assayId === 'PRRSV');
    expect(prrsv).toMatchObject({
      positive: 0,
      suspect: 3,
      negative: 3,
      positivePens: [],
      positivePoolPens: ['A1', 'A2', 'A3'],
    });
    expect(prrsv.confidence.pooled).toMatchObject({ pools: 2, pooledPens: 5, positivePools: 1 });
    const a2 = summary.pens.find((pen: { barnId: string; penId: string }) => pen.barnId === 'F1' && pen.penId === 'A2');
    expect(a2.results.PRRSV).toMatchObject({
      resultClass: 'suspect',
      sampleId: 'HC-P1',
      pool: { poolId: 'HC-P1', poolClass: 'positive' },
    });

    // New columns go at the end (README: summary.csv columns are stable; common practice, no source).
    expect(SUMMARY_COLUMNS.slice(SUMMARY_COLUMNS.indexOf('pool'), SUMMARY_COLUMNS.indexOf('pool') + 5)).toEqual([
      'pool',
      'pools',
      'positive_pool_pens',
      'pool_sensitivity',
      'unpooled_detection_confidence',
    ]);
    const csv = fs.readFileSync(path.join(roundDir(ws.paths.outbox), 'summary.csv'), 'utf8').split('\n');
    const header = csv[0]!.split(',');
    const cell = (line: string, column: string) => line.split(',')[header.indexOf(column)];
    const barnRow = csv.find(
      (line) => line.startsWith('barn,') && cell(line, 'barn') === 'F1' && cell(line, 'assay') === 'PRRSV',
    )!;
    expect(cell(barnRow, 'pools')).toBe('2');
    expect(cell(barnRow, 'positive_pool_pens')).toBe('A1 A2 A3');
    expect(Number(cell(barnRow, 'unpooled_detection_confidence'))).toBeCloseTo(
      prrsv.confidence.pooled.unpooledDetectionConfidence,
      6,
    );
    const penRow = csv.find(
      (line) => line.startsWith('pen,') && cell(line, 'pen') === 'A4' && cell(line, 'assay') === 'PRRSV',
    )!;
    expect([cell(penRow, 'class'), cell(penRow, 'pool')]).toEqual(['negative', 'HC-P2']);

    const page = fs.readFileSync(path.join(roundDir(ws.paths.outbox), 'summary.html'), 'utf8');
    expect(page).toContain('positive pool HC-P1: retest on its own');
    expect(page).toContain('had each pen been tested on its own');

    // The next plan retests each pen of the positive pool on its own.
    const plan = JSON.parse(fs.readFileSync(path.join(ws.paths.outbox, 'hollow-creek', 'next-round.json'), 'utf8'));
    const retests = plan.ropes
      .filter((rope: { barnId: string; reason: string }) => rope.barnId === 'F1' && rope.reason === 'retest')
      .map((rope: { penId: string }) => rope.penId);
    expect(retests).toEqual(expect.arrayContaining(['A1', 'A2', 'A3']));
  });

  it('places results reported under a pool ID before the sheet once the sheet arrives', async () => {
    const ws = workspace();
    const lab = await ws.drop('nvdl_results_2026-08-06.csv', results());
    expect(lab.receipt.unresolvedSampleIds).toEqual(['HC-0803-F1-06', 'HC-P1', 'HC-P2']);
    const sheet = await ws.drop('hollow-creek_ropes.csv', SHEET);
    expect(sheet.receipt.resolvedSampleIds).toEqual(['HC-0803-F1-06', 'HC-P1', 'HC-P2']);
    const summary = JSON.parse(fs.readFileSync(path.join(roundDir(ws.paths.outbox), 'summary.json'), 'utf8'));
    expect(summary.barns.find((barn: { barnId: string }) => barn.barnId === 'F1')).toMatchObject({ ropesReturned: 6 });
  });
});
