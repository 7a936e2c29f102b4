import { NORTHFIELD_HEADER } from '../../src/demo/labFiles.js';
/**
 * Every result read as the lab meant it: a failed internal control written inside the call cell
 * ("IK ungültig") makes the result invalid, never negative; a blank value is "not detected" only
 * beside a negative call; the lab's own call, in its own words, is checked against the value; the
 * state of the report (preliminary, final, corrected) is read from any status column. Profiles:
 * the corpus config (test/fixtures/exports/config), where the invented Auenfeld lab writes German.
 * Expected readings are by hand from each profile's words and cutoffs; that a failed control is
 * invalid (retest) and never negative is common practice, no source.
 */
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import type { LabProfile } from '../../src/config/types.js';
import { detectFileKind } from '../../src/ingest/detect.js';
import { ingestFile } from '../../src/ingest/ingestFile.js';
import { plannedIdChecker } from '../../src/ingest/plannedIds.js';
import { mapResultRow, type ResultContext } from '../../src/ingest/resultRecords.js';
import { receiptText } from '../../src/pipeline.js';
import { storeSql } from '../helpers/storeSql.js';
import { openTestStore } from '../helpers/testStore.js';

const CORPUS = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../fixtures/exports');
const config = loadConfig(path.join(CORPUS, 'config'));
const check = plannedIdChecker(config);

function contextFor(
  fileName: string,
  header: readonly string[],
  labOverride?: (lab: LabProfile) => LabProfile,
): ResultContext {
  const kind = detectFileKind(fileName, header.join(header.includes('Probe') ? ';' : ',') + '\n', config.labs);
  if (kind.kind !== 'results') throw new Error(`${fileName}: header not recognised`);
  const lab = labOverride ? labOverride(kind.lab) : kind.lab;
  return {
    fileName,
    lab,
    columnIndex: kind.columnIndex,
    assayById: config.assayById,
    sites: config.sites,
    plannedIdCheck: check,
  };
}

const AU_HEADER = ['Probe', 'Test', 'Cq', 'Befund', 'Status', 'Entnahme', 'Befunddatum'] as const;
const auContext = contextFor('atd_t.csv', AU_HEADER);
type AuRow = Partial<Record<(typeof AU_HEADER)[number], string>>;
const auBase: AuRow = {
  Probe: 'AU-1',
  Test: 'PRRSV',
  Cq: '',
  Befund: 'negativ',
  Status: 'endgültig',
  Entnahme: '03.08.2026',
  Befunddatum: '06.08.2026',
};
const au = (row: AuRow, line = 2) =>
  mapResultRow(
    AU_HEADER.map((column) => ({ ...auBase, ...row })[column] ?? ''),
    line,
    auContext,
  );

// The demo lab's export header, as the demo writes it.
const NF_HEADER = NORTHFIELD_HEADER;
const nfContext = contextFor('nvdl_t.csv', NF_HEADER);
type NfRow = Partial<Record<(typeof NF_HEADER)[number], string>>;
const nfBase: NfRow = {
  'Case No': 'NV-1',
  'Sample ID': 'S-1',
  'Test Name': 'PRRSV NA/EU RT-PCR',
  'Ct Value': 'Undetermined',
  Interpretation: 'Negative',
  'Internal Control': 'PASS',
  'Collection Date': '2026-08-03',
  'Report Date': '2026-08-06',
  'Report Status': 'Final',
};
const nf = (row: NfRow, context = nfContext) =>
  mapResultRow(
    NF_HEADER.map((column) => ({ ...nfBase, ...row })[column] ?? ''),
    2,
    context,
  );

describe('a failed internal control is invalid, never negative', () => {
  it('reads the control-failure word inside the call cell, in any case and with or without accents', () => {
    // Before, "ungültig" matched only a whole cell: "IK ungültig" with a blank Cq was read as not detected.
    for (const befund of ['IK ungültig', 'IK UNGÜLTIG', 'ik ungultig', 'ungültig']) {
      const outcome = au({ Befund: befund });
      expect(outcome, befund).toMatchObject({
        ok: true,
        row: { resultClass: 'invalid', ct: null, callDiffers: false },
      });
      expect(outcome.ok && outcome.row.reason, befund).toMatch(/internal control failed.*retest, not a negative/);
    }
    // The control word in the status column fails the control too.
    expect(au({ Befund: 'negativ', Status: 'IK ungültig' })).toMatchObject({
      ok: true,
      row: { resultClass: 'invalid' },
    });
    // A value beside a failed control is no result either.
    expect(au({ Cq: '24,0', Befund: 'positiv, IK ungültig' })).toMatchObject({
      ok: true,
      row: { resultClass: 'invalid' },
    });
  });

  it('reads a blank value as not detected only beside a negative call', () => {
    expect(au({ Befund: 'negativ' })).toMatchObject({
      ok: true,
      row: { resultClass: 'negative', labCallClass: 'negative', callDiffers: false },
    });
    expect(au({ Befund: 'nicht nachweisbar' })).toMatchObject({ ok: true, row: { resultClass: 'negative' } });
    // A pending row, an unreadable call, no call at all: no evidence of absence.
    for (const befund of ['ausstehend', 'siehe Anhang', '']) {
      const outcome = au({ Befund: befund, Status: 'vorläufig' });
      expect(outcome, befund).toMatchObject({ ok: true, row: { resultClass: 'invalid', statusKind: 'preliminary' } });
      expect(outcome.ok && outcome.row.reason, befund).toMatch(/held as invalid, not read as not detected/);
    }
    // The English defaults of a lab with its own English profile work alike.
    expect(nf({ 'Ct Value': '', Interpretation: 'Pending', 'Report Status': 'Pending' })).toMatchObject({
      ok: true,
      row: { resultClass: 'invalid', statusKind: 'preliminary' },
    });
    expect(nf({ 'Ct Value': '', Interpretation: 'Not Detected' })).toMatchObject({
      ok: true,
      row: { resultClass: 'negative' },
    });
  });

  it('keeps the blank-is-not-detected reading of a lab that writes no call at all', () => {
    const noCall = contextFor('nvdl_t.csv', NF_HEADER, (lab) => ({
      ...lab,
      columns: { ...lab.columns, call: undefined },
    }));
    expect(nf({ 'Ct Value': '', Interpretation: 'Pending' }, noCall)).toMatchObject({
      ok: true,
      row: { resultClass: 'negative', labCall: null },
    });
  });

  it("reads the lab's own invalid call as invalid", () => {
    expect(nf({ 'Ct Value': '30.00', Interpretation: 'Invalid' })).toMatchObject({
      ok: true,
      row: { resultClass: 'invalid', labCallClass: 'invalid', callDiffers: false },
    });
  });
});

describe("the lab's call, in its own words, against the value", () => {
  it('flags a call that disagrees with the class from the cutoffs, with both readings kept', () => {
    // Auenfeld PRRSV cutoffs: positive below 35, suspect below 38; Cq 36,5 is suspect, the lab wrote "negativ".
    expect(au({ Cq: '36,5', Befund: 'negativ' })).toMatchObject({
      ok: true,
      row: { resultClass: 'suspect', labCall: 'negativ', labCallClass: 'negative', callDiffers: true },
    });
    expect(au({ Cq: '36,5', Befund: 'fraglich' })).toMatchObject({
      ok: true,
      row: { resultClass: 'suspect', callDiffers: false },
    });
    expect(au({ Cq: '28,4', Befund: 'positiv' })).toMatchObject({
      ok: true,
      row: { resultClass: 'positive', callDiffers: false },
    });
    // Before, calls were read in English only: "positiv" beside a negative value went unflagged.
    expect(au({ Cq: 'n.n.', Befund: 'positiv' })).toMatchObject({
      ok: true,
      row: { resultClass: 'negative', labCallClass: 'positive', callDiffers: true },
    });
  });
});

describe('the state of a report', () => {
  it('reads a correction written in the call column, and marks it as a reissue', () => {
    expect(au({ Cq: '31,0', Befund: 'positiv (Korrektur)', Status: '' })).toMatchObject({
      ok: true,
      row: {
        resultClass: 'positive',
        labCallClass: 'positive',
        statusKind: 'corrected',
        statusWord: 'Korrektur',
        markedReissue: true,
      },
    });
    expect(au({ Cq: '31,0', Befund: 'positiv', Status: 'endgültig' })).toMatchObject({
      ok: true,
      row: { statusKind: 'final', markedReissue: false },
    });
    expect(nf({ 'Report Status': 'corrected' })).toMatchObject({
      ok: true,
      row: { statusKind: 'corrected', markedReissue: true },
    });
    expect(nf({ 'Report Status': '' })).toMatchObject({ ok: true, row: { statusKind: null } });
  });
});

describe('the receipt of a German export', () => {
  for (const thread of ['main thread', 'parse worker'] as const) {
    it(`names the rows read as invalid and why, and every call that disagrees, with both readings (${thread})`, async () => {
      const store = openTestStore();
      try {
        const receipt = await ingestFile(path.join(CORPUS, 'atd_befund-words.csv'), {
          config,
          store,
          now: () => new Date('2026-12-01T12:00:00Z'),
          parseInWorkerFromBytes: thread === 'parse worker' ? 0 : Number.POSITIVE_INFINITY,
        });
        // By hand from the file: line 4 "IK ungültig" (failed control), line 5 "ausstehend" with no Cq.
        expect(receipt.invalidRows!.map((row) => [row.line, row.sampleId])).toEqual([
          [4, 'AU-3'],
          [5, 'AU-4'],
        ]);
        expect(receipt.invalidRows![0]!.reason).toMatch(/internal control failed \("ungültig" in "IK ungültig"\)/);
        expect(receipt.invalidRows![1]!.reason).toMatch(/"ausstehend" is not one of its negative words/);
        // Line 7: Cq 36,5 is suspect (35 <= Cq < 38), the lab wrote "negativ".
        expect(receipt.callDisagreements).toEqual([
          {
            line: 7,
            sampleId: 'AU-6',
            assayId: 'PRRSV',
            labCall: 'negativ',
            labCallClass: 'negative',
            resultClass: 'suspect',
            ctRaw: '36,5',
          },
        ]);
        const text = receiptText(receipt);
        expect(text).toContain('rows read as invalid (retest; never counted as negative):');
        expect(text).toContain(
          'line 4, AU-3 PRRSV: internal control failed ("ungültig" in "IK ungültig"): retest, not a negative',
        );
        expect(text).toContain('line 7, AU-6 PRRSV: lab "negativ" (negative), ropewatch suspect from "36,5"');
        const stored = storeSql(store).all(
          'SELECT s.sample_id AS id, r.class, r.status_kind AS status, r.lab_call_class AS "call" FROM results_read r JOIN samples s ON s.id = r.sample ORDER BY r.line',
        );
        expect(stored).toEqual([
          { id: 'AU-1', class: 'positive', status: 'final', call: 'positive' },
          { id: 'AU-2', class: 'negative', status: 'final', call: 'negative' },
          { id: 'AU-3', class: 'invalid', status: 'final', call: 'invalid' },
          { id: 'AU-4', class: 'invalid', status: 'preliminary', call: null },
          { id: 'AU-5', class: 'positive', status: 'corrected', call: 'positive' },
          { id: 'AU-6', class: 'suspect', status: 'final', call: 'negative' },
          { id: 'AU-7', class: 'negative', status: 'final', call: 'negative' },
        ]);
      } finally {
        store.close();
      }
    });
  }
});
