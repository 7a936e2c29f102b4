/**
 * Wide exports (one row per sample, one value column per assay) read through a lab profile with
 * `layout: wide`: each value cell becomes the long row of its sample and assay, so classes,
 * refusals and receipts are those of a long export. The lab below is invented; its expected
 * classes follow from its cutoffs by hand (PRRSV: positive below 35, suspect below 38; IAV:
 * positive below 37, suspect below 40). A blank value cell, or "n.t.", is "not tested": nothing
 * is stored for it (common practice, no source: a wide table has a cell under every assay
 * whether it was ordered or not, and a test never run is no negative).
 */
import fs from 'node:fs';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config/load.js';
import { detectFileKind } from '../../src/ingest/detect.js';
import { IngestError } from '../../src/ingest/errors.js';
import { ingestFile } from '../../src/ingest/ingestFile.js';
import { workspacesPerTest, type TestWorkspace } from '../helpers/workspace.js';
import { openTestStore } from '../helpers/testStore.js';

const workspace = workspacesPerTest();

const WIDE_LAB = `id: wrenfold
name: Wrenfold Veterinary Laboratory (invented)
fileNamePattern: '^wvl_'
layout: wide
format:
  delimiter: ','
  dateFormat: dd/MM/yyyy
columns:
  sampleId: Sample
  accession: Submission
  collectedOn: Collected
  internalControl: IC
notDetected:
  tokens: [ND]
notTestedTokens: [n.t., '-']
controlFailedTokens: [FAIL]
assays:
  PRRSV Ct: { assay: PRRSV, positiveBelow: 35, suspectBelow: 38, cycleLimit: 40 }
  IAV Ct: { assay: IAV, positiveBelow: 37, suspectBelow: 40, cycleLimit: 40 }
`;

const HEADER = ['Submission', 'Sample', 'Collected', 'IC', 'PRRSV Ct', 'IAV Ct'];
/** Data rows from line 2 on (line 1 is the header). */
const ROWS: (string | number)[][] = [
  ['W-1', 'WD-1', '03/08/2026', 'PASS', 31.2, 'ND'], // line 2: PRRSV positive, IAV not detected
  ['W-1', 'WD-2', '03/08/2026', 'PASS', '', 'n.t.'], // line 3: neither assay run: nothing stored, nothing refused
  ['W-1', 'WD-3', '03/08/2026', 'PASS', 'ND', 36.5], // line 4: PRRSV negative, IAV positive
  ['W-1', 'WD-4', '03/08/2026', 'PASS', 'abc', 30], // line 5: PRRSV refused in its column, IAV positive
  ['W-1', 'WD-5', '31/02/2026', 'PASS', 30, 31], // line 6: no 31 February: the row refused once, at its date
  ['W-1', '', '03/08/2026', 'PASS', 30, 31], // line 7: values without a sample: refused once
  ['W-1', 'WD-7', '03/08/2026', 'FAIL', 32, 'ND'], // line 8: the control failed: both invalid, never negative
  ['W-1', 'WD-8', '03/08/2026', 'PASS', 36, '-'], // line 9: PRRSV suspect; IAV not tested
];

const csv = (rows: readonly (readonly (string | number)[])[]) =>
  [HEADER, ...rows].map((row) => row.join(',')).join('\n') + '\n';

async function workbook(rows: readonly (readonly (string | number)[])[]): Promise<Buffer> {
  const book = new ExcelJS.Workbook();
  const sheet = book.addWorksheet('Results');
  sheet.addRow(HEADER);
  for (const row of rows) sheet.addRow(row.map((cell) => (cell === '' ? null : cell)));
  return Buffer.from(await book.xlsx.writeBuffer());
}

type Stored = { id: string; line: number; assay: string; labAssay: string; ct: number | null; class: string };
const stored = (ws: TestWorkspace): Stored[] =>
  ws
    .sql()
    .all<Stored>(
      'SELECT s.sample_id AS id, r.line, r.assay_id AS assay, r.lab_assay AS "labAssay", r.ct, r.class FROM results_read r JOIN samples s ON s.id = r.sample ORDER BY r.line, r.assay_id',
    );

const EXPECTED: Stored[] = [
  { id: 'WD-1', line: 2, assay: 'IAV', labAssay: 'IAV Ct', ct: null, class: 'negative' },
  { id: 'WD-1', line: 2, assay: 'PRRSV', labAssay: 'PRRSV Ct', ct: 31.2, class: 'positive' },
  { id: 'WD-3', line: 4, assay: 'IAV', labAssay: 'IAV Ct', ct: 36.5, class: 'positive' },
  { id: 'WD-3', line: 4, assay: 'PRRSV', labAssay: 'PRRSV Ct', ct: null, class: 'negative' },
  { id: 'WD-4', line: 5, assay: 'IAV', labAssay: 'IAV Ct', ct: 30, class: 'positive' },
  { id: 'WD-7', line: 8, assay: 'IAV', labAssay: 'IAV Ct', ct: null, class: 'invalid' },
  { id: 'WD-7', line: 8, assay: 'PRRSV', labAssay: 'PRRSV Ct', ct: 32, class: 'invalid' },
  { id: 'WD-8', line: 9, assay: 'PRRSV', labAssay: 'PRRSV Ct', ct: 36, class: 'suspect' },
];
const EXPECTED_REFUSALS = [
  { line: 5, field: 'PRRSV Ct', code: 'bad-ct' },
  { line: 6, field: 'Collected', code: 'bad-date' },
  { line: 7, field: 'Sample', code: 'missing-value' },
];

describe('a wide export read through a lab profile with layout: wide', () => {
  for (const form of ['CSV', 'workbook'] as const) {
    it(`stores one result per value cell, none for a cell not tested, and names the value column of a refused value (${form})`, async () => {
      const ws = workspace({ configFiles: { 'labs/wrenfold.yaml': WIDE_LAB } });
      const { receipt } =
        form === 'CSV'
          ? await ws.drop('wvl_2026-08-05.csv', csv(ROWS))
          : await ws.drop('wvl_2026-08-05.xlsx', await workbook(ROWS));
      expect(receipt).toMatchObject({
        status: 'accepted',
        kind: 'results',
        lab: 'wrenfold',
        rows: { accepted: EXPECTED.length, rejected: EXPECTED_REFUSALS.length },
      });
      expect(receipt.rejectedRows.map(({ line, field, code }) => ({ line, field, code }))).toEqual(EXPECTED_REFUSALS);
      expect(stored(ws)).toEqual(EXPECTED);
      // WD-2 had no assay run: it is not in the store at all (not as negative, not as unresolved).
      expect(receipt.unresolvedSampleIds).not.toContain('WD-2');
      expect(ws.ws().store.counts()).toMatchObject({
        results: EXPECTED.length,
        rejectedRows: EXPECTED_REFUSALS.length,
      });
    });
  }

  it('reads the rows of a wide export the same on the parse worker as on the main thread', async () => {
    const ws = workspace({ configFiles: { 'labs/wrenfold.yaml': WIDE_LAB } });
    const file = path.join(ws.paths.inbox, 'wvl_worker.csv');
    fs.writeFileSync(file, csv(ROWS));
    const outcomes = [];
    for (const parseInWorkerFromBytes of [Number.POSITIVE_INFINITY, 0]) {
      const store = openTestStore();
      try {
        const receipt = await ingestFile(file, {
          config: ws.config(),
          store,
          now: () => new Date('2026-12-01T12:00:00Z'),
          parseInWorkerFromBytes,
        });
        outcomes.push({
          rows: receipt.rows,
          refused: receipt.rejectedRows.map(({ line, field, code }) => ({ line, field, code })),
        });
      } finally {
        store.close();
      }
    }
    expect(outcomes[1]).toEqual(outcomes[0]);
    expect(outcomes[0]!.refused).toEqual(EXPECTED_REFUSALS);
  });

  it('detects a wide export by its sample column and at least one value column, and names them when missing', () => {
    const ws = workspace({ configFiles: { 'labs/wrenfold.yaml': WIDE_LAB } });
    const labs = ws.config().labs;
    const kind = detectFileKind('export.csv', 'Sample,Collected,IAV Ct\n', labs);
    expect(kind.kind === 'results' && kind.lab.id).toBe('wrenfold');
    let refused: unknown;
    try {
      detectFileKind('wvl_x.csv', 'Sample,Collected,PCV2 Ct\n', labs);
    } catch (error) {
      refused = error;
    }
    expect(refused).toBeInstanceOf(IngestError);
    expect(refused).toMatchObject({ code: 'missing-column', line: 1, field: 'PRRSV Ct' });
    expect((refused as Error).message).toContain('needs at least one of its value columns ("PRRSV Ct", "IAV Ct")');
  });
});

describe('lab profile keys of the wide layout', () => {
  const problems = (labYaml: string): string[] => {
    const ws = workspace({ configFiles: { 'labs/wrenfold.yaml': labYaml } });
    try {
      loadConfig(ws.paths.configDir);
    } catch (error) {
      if (error instanceof ConfigError)
        return error.problems
          .filter((problem) => problem.file.endsWith('wrenfold.yaml'))
          .map((problem) => `${problem.keyPath}: ${problem.detail}`);
      throw error;
    }
    return [];
  };

  it('loads the wide profile with its not-tested words and default workbook settings', () => {
    const ws = workspace({ configFiles: { 'labs/wrenfold.yaml': WIDE_LAB } });
    const lab = ws.config().labById.get('wrenfold')!;
    expect(lab.layout).toBe('wide');
    expect([...lab.notTestedTokens]).toEqual(['n.t.', '-']);
    // No workbook block: the first visible sheet, the header on row skipLines + 1.
    expect(lab.workbook).toEqual({ sheet: undefined, headerRow: 1 });
    expect(ws.config().labById.get('northfield')!.layout).toBe('long');
  });

  it('refuses an assay, Ct or call column in a wide profile, and a word meaning both not tested and not detected', () => {
    const found = problems(
      WIDE_LAB.replace('  internalControl: IC\n', '  internalControl: IC\n  ct: Ct\n  call: Result\n').replace(
        "notTestedTokens: [n.t., '-']",
        'notTestedTokens: [n.t., nd]',
      ),
    );
    expect(found).toEqual([
      expect.stringMatching(/^columns\.ct: a wide export \(layout: wide\) has no ct column/),
      expect.stringMatching(
        /^columns\.call: a wide export \(layout: wide\) has no call column: one call cannot speak for several assays/,
      ),
      expect.stringMatching(/^notTestedTokens\[1\]: "nd" is also in notDetected\.tokens/),
    ]);
  });

  it('requires the assay and Ct columns of a long profile, and refuses not-tested words there', () => {
    const long = WIDE_LAB.replace('layout: wide\n', '');
    expect(problems(long)).toEqual([
      expect.stringMatching(/^columns\.assay: is required/),
      expect.stringMatching(/^columns\.result: is required/),
      expect.stringMatching(/^notTestedTokens: applies to layout: wide only/),
    ]);
  });
});
