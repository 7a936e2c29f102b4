/**
 * Preliminary, final and corrected reports: a preliminary report never replaces a final one, a
 * correction replaces what it corrects and is named (sample, old reading -> new reading, the
 * lab's report dates) in the receipt and in the store. The rules follow HL7 v2 observation result
 * status (table 0085: P preliminary, F final, C "a correction and thus replaces a final result";
 * HL7 v2.5.1, from memory); a final report replacing a preliminary one is common practice, no
 * source. Expected outcomes are by hand from the rows written.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { receiptText } from '../../src/pipeline.js';
import { decideSupersession, type ReportFacts } from '../../src/ingest/supersession.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
const AUENFELD = fs.readFileSync(
  path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../fixtures/exports/config/labs/auenfeld.yaml'),
  'utf8',
);

const facts = (
  reportedOn: string | null,
  status: ReportFacts['status'],
  statusWord: string | null = null,
): ReportFacts => ({ reportedOn, status, statusWord });

describe('decideSupersession', () => {
  it('never lets a preliminary report replace a final, corrected or unmarked one, whatever its date', () => {
    for (const old of [facts('2026-08-06', 'final'), facts('2026-08-06', 'corrected'), facts('2026-08-06', null)]) {
      expect(decideSupersession(old, facts('2026-08-09', 'preliminary', 'Pending'))).toMatchObject({
        current: 'old',
        kind: 'preliminary-after-final',
      });
    }
    // Two preliminary reports: the later date wins.
    expect(decideSupersession(facts('2026-08-06', 'preliminary'), facts('2026-08-07', 'preliminary'))).toMatchObject({
      current: 'next',
      kind: 'later-report',
    });
  });

  it('lets a final report replace a preliminary one, even one dated later', () => {
    expect(decideSupersession(facts('2026-08-08', 'preliminary'), facts('2026-08-07', 'final'))).toMatchObject({
      current: 'next',
      kind: 'final-over-preliminary',
    });
    expect(decideSupersession(facts('2026-08-06', 'preliminary'), facts('2026-08-07', null))).toMatchObject({
      current: 'next',
      kind: 'final-over-preliminary',
    });
  });

  it('lets a correction replace what it corrects, and keeps a correction against unmarked reports not dated after it', () => {
    expect(
      decideSupersession(facts('2026-08-06', 'final'), facts('2026-08-07', 'corrected', 'Korrektur')),
    ).toMatchObject({ current: 'next', kind: 'correction' });
    // A correction dated before the report it corrects still replaces it (the lab says it corrects).
    expect(decideSupersession(facts('2026-08-08', 'final'), facts('2026-08-07', 'corrected'))).toMatchObject({
      current: 'next',
      kind: 'correction',
    });
    expect(decideSupersession(facts('2026-08-07', 'corrected'), facts('2026-08-07', 'final'))).toMatchObject({
      current: 'old',
      kind: 'correction-kept',
    });
    expect(decideSupersession(facts('2026-08-07', 'corrected'), facts('2026-08-09', 'final'))).toMatchObject({
      current: 'next',
      kind: 'later-report',
    });
    // Of two corrections, the later-dated one stays.
    expect(decideSupersession(facts('2026-08-09', 'corrected'), facts('2026-08-08', 'corrected'))).toMatchObject({
      current: 'old',
      kind: 'correction-kept',
    });
  });

  it('keeps the date rule between final reports', () => {
    expect(decideSupersession(facts('2026-08-09', 'final'), facts('2026-08-06', 'final'))).toMatchObject({
      current: 'old',
      kind: 'earlier-report-kept',
    });
    expect(decideSupersession(facts('2026-08-06', null), facts('2026-08-09', null))).toMatchObject({
      current: 'next',
      kind: 'later-report',
    });
    expect(decideSupersession(facts('2026-08-06', 'final'), facts('2026-08-06', 'final'))).toMatchObject({
      current: 'next',
      kind: 'same-date-later-file',
    });
  });
});

const NF_HEADER =
  'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status';
const nfLine = (sample: string, ct: string, call: string, reported: string, status: string) =>
  `NV26-1,${sample},PRRSV NA/EU RT-PCR,${ct},${call},PASS,2026-08-03,${reported},${status}`;
const AU_HEADER = 'Probe;Test;Cq;Befund;Status;Entnahme;Befunddatum';
const latin1 = (lines: string[]) => Buffer.from(lines.join('\r\n') + '\r\n', 'latin1');

describe('reports through the pipeline', () => {
  it('keeps a final negative current when a blank "Pending" row arrives after it, and says so in the receipt', async () => {
    const ws = workspace();
    await ws.drop(
      'nvdl_a.csv',
      [NF_HEADER, nfLine('S1', 'Undetermined', 'Negative', '2026-08-06', 'Final')].join('\n') + '\n',
    );
    // Before, this row (blank Ct, read as not detected) silently replaced the final negative.
    const pending = await ws.drop(
      'nvdl_b.csv',
      [NF_HEADER, nfLine('S1', '', '', '2026-08-08', 'Pending')].join('\n') + '\n',
    );
    const store = ws.ws().store;
    expect(
      store.currentResults().map((result) => [result.sampleId, result.resultClass, result.ctRaw, result.reportedOn]),
    ).toEqual([['S1', 'negative', 'Undetermined', '2026-08-06']]);
    expect(pending.receipt.supersessions).toMatchObject([
      {
        line: 2,
        sampleId: 'S1',
        kind: 'preliminary-after-final',
        thisFileCurrent: false,
        replaced: { resultClass: 'invalid', ctRaw: '', reportedOn: '2026-08-08', status: 'preliminary' },
        current: { resultClass: 'negative', ctRaw: 'Undetermined', reportedOn: '2026-08-06', status: 'final' },
      },
    ]);
    expect(receiptText(pending.receipt)).toMatch(
      /S1 PRRSV: invalid \(blank value; reported 2026-08-08, preliminary\) -> negative \(Undetermined, lab "Negative"; reported 2026-08-06, final\) \[the earlier report stays current\]/,
    );
  });

  it('lets the final report replace a preliminary one', async () => {
    const ws = workspace();
    await ws.drop('nvdl_a.csv', [NF_HEADER, nfLine('S1', '', '', '2026-08-06', 'Preliminary')].join('\n') + '\n');
    const final = await ws.drop(
      'nvdl_b.csv',
      [NF_HEADER, nfLine('S1', '31.20', 'Positive', '2026-08-07', 'Final')].join('\n') + '\n',
    );
    expect(final.receipt.supersessions).toMatchObject([{ kind: 'final-over-preliminary', thisFileCurrent: true }]);
    expect(
      ws
        .ws()
        .store.currentResults()
        .map((result) => [result.resultClass, result.ct]),
    ).toEqual([['positive', 31.2]]);
  });

  it('reads "(Korrektur)" in the call column as a correction that supersedes, named with both readings and report dates', async () => {
    const ws = workspace({ configFiles: { 'labs/auenfeld.yaml': AUENFELD } });
    await ws.drop('atd_1.csv', latin1([AU_HEADER, 'AU-9;PRRSV;;negativ;endgültig;03.08.2026;06.08.2026']));
    const corrected = await ws.drop(
      'atd_2.csv',
      latin1([AU_HEADER, 'AU-9;PRRSV;31,0;positiv (Korrektur);;03.08.2026;05.08.2026']),
    );
    // The correction is dated before the report it corrects, and still replaces it: the lab says so.
    expect(corrected.receipt.rows).toMatchObject({ accepted: 1, superseded: 1 });
    expect(corrected.receipt.supersessions).toMatchObject([
      {
        sampleId: 'AU-9',
        kind: 'correction',
        thisFileCurrent: true,
        replaced: { resultClass: 'negative', ctRaw: '', labCall: 'negativ', reportedOn: '2026-08-06', status: 'final' },
        current: {
          resultClass: 'positive',
          ctRaw: '31,0',
          labCall: 'positiv (Korrektur)',
          reportedOn: '2026-08-05',
          status: 'corrected',
        },
      },
    ]);
    expect(receiptText(corrected.receipt)).toContain(
      'line 2, AU-9 PRRSV: negative (blank value, lab "negativ"; reported 2026-08-06, final) -> positive (31,0, lab "positiv (Korrektur)"; reported 2026-08-05, corrected): reissued by the lab as a correction ("Korrektur"',
    );
    const store = ws.ws().store;
    expect(store.currentResults().map((result) => [result.sampleId, result.resultClass, result.ct])).toEqual([
      ['AU-9', 'positive', 31],
    ]);
    // What the summary page needs, queryable in one view: old and new readings and report dates.
    expect(
      ws
        .sql()
        .all(
          'SELECT sample_id, kind, old_class, old_ct_raw, old_reported_on, new_class, new_ct, new_reported_on, new_status_kind, new_status_word FROM supersession_readings',
        ),
    ).toEqual([
      {
        sample_id: 'AU-9',
        kind: 'correction',
        old_class: 'negative',
        old_ct_raw: '',
        old_reported_on: '2026-08-06',
        new_class: 'positive',
        new_ct: 31,
        new_reported_on: '2026-08-05',
        new_status_kind: 'corrected',
        new_status_word: 'Korrektur',
      },
    ]);
  });

  it('keeps a correction current against an unmarked report of the same date', async () => {
    const ws = workspace();
    await ws.drop(
      'nvdl_a.csv',
      [NF_HEADER, nfLine('S1', '29.00', 'Positive', '2026-08-07', 'Corrected')].join('\n') + '\n',
    );
    const resent = await ws.drop(
      'nvdl_b.csv',
      [NF_HEADER, nfLine('S1', 'Undetermined', 'Negative', '2026-08-07', 'Final')].join('\n') + '\n',
    );
    expect(resent.receipt.supersessions).toMatchObject([{ kind: 'correction-kept', thisFileCurrent: false }]);
    expect(
      ws
        .ws()
        .store.currentResults()
        .map((result) => result.ct),
    ).toEqual([29]);
  });
});
