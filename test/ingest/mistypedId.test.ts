/**
 * A mistyped planned sample ID is refused (bad-check-character) and named with the planned ID it
 * most likely meant; a person confirms it in config/corrections.yaml and ingests the file again,
 * and the row is stored under the meant ID with the ID as written kept beside it. Check
 * characters: ISO/IEC 7064 MOD 37-2, which detects every single substitution and every swap of
 * neighbours, so each such error leaves a refused ID one keying error away from the ID meant.
 */
import fs from 'node:fs';
import path from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ingestFile } from '../../src/ingest/ingestFile.js';
import { likelyMeantIds, plannedIdChecker } from '../../src/ingest/plannedIds.js';
import { receiptText } from '../../src/pipeline.js';
import { formatSampleId, mod37CheckCharacter } from '../../src/plan/sampleId.js';
import type { PlannedRope } from '../../src/store/store.js';
import { FIXED_NOW, workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

describe('likelyMeantIds', () => {
  // By hand, ISO/IEC 7064 MOD 37-2 over "HCF03012" (H=17, C=12, F=15, then the digits):
  // P = 2(0+17) mod 37 = 34; 2(34+12) = 92 -> 18; 2(18+15) = 66 -> 29; 2(29+0) = 58 -> 21;
  // 2(21+3) = 48 -> 11; 2(11+0) = 22; 2(22+1) = 46 -> 9; 2(9+2) = 22; check = (38 - 22) mod 37 = 16 = G.
  it('agrees with a check character computed by hand', () => {
    expect(mod37CheckCharacter('HCF03012')).toBe('G');
    expect(formatSampleId({ siteCode: 'HCF', round: 3, sequence: 12 })).toBe('HCF03-012G');
  });

  const planned = new Set(['HCF03-012G', formatSampleId({ siteCode: 'HCF', round: 3, sequence: 13 })]);
  const isPlanned = (id: string) => planned.has(id);

  it('finds the planned ID one substitution away, anywhere in the ID', () => {
    expect(likelyMeantIds('HCF03-013G', isPlanned).map((found) => found.id)).toContain('HCF03-012G');
    expect(likelyMeantIds('HCF03-013G', isPlanned).find((found) => found.id === 'HCF03-012G')!.kind).toBe(
      'substitution',
    );
    // The check character itself mistyped.
    expect(likelyMeantIds('HCF03-012H', isPlanned)).toEqual([{ id: 'HCF03-012G', kind: 'substitution' }]);
    // A letter of the site code mistyped, written in lower case with spaces.
    expect(likelyMeantIds('hcg03 - 012g', isPlanned)).toEqual([{ id: 'HCF03-012G', kind: 'substitution' }]);
  });

  it('finds the planned ID one swap of neighbours away, also across the hyphen', () => {
    expect(likelyMeantIds('HCF03-021G', isPlanned)).toEqual([{ id: 'HCF03-012G', kind: 'transposition' }]);
    // "3" and "0" on either side of the hyphen swapped: HCF00-312G.
    expect(likelyMeantIds('HCF00-312G', isPlanned)).toEqual([{ id: 'HCF03-012G', kind: 'transposition' }]);
  });

  it('finds nothing two errors away, and nothing that is not planned', () => {
    expect(likelyMeantIds('HCF03-031H', isPlanned)).toEqual([]);
    expect(likelyMeantIds('HCF03-012H', () => false)).toEqual([]);
  });
});

describe('plannedIdChecker with confirmed corrections', () => {
  it('reads a corrected ID on the line named, or on every line when none is', () => {
    const config = {
      sites: [{ code: 'HCF' }] as never,
      corrections: [{ written: 'HCF03-013G', meant: 'HCF03-012G', file: 'a.csv', line: 4, note: undefined }],
    };
    const check = plannedIdChecker(config);
    expect(check('HCF03-013G', 4)).toEqual({ kind: 'corrected', canonical: 'HCF03-012G', written: 'HCF03-013G' });
    expect(check('HCF03-013G', 5)).toEqual({ kind: 'bad-check' });
    const anywhere = plannedIdChecker({ ...config, corrections: [{ ...config.corrections[0]!, line: undefined }] });
    expect(anywhere('HCF03-013G', 5)).toMatchObject({ kind: 'corrected', canonical: 'HCF03-012G' });
  });

  it('answers each ID in a run of rows as a checker asked about that ID alone', () => {
    // Oracle: a new checker per row, which has met no ID before. Neighbouring rows repeat IDs
    // (a sample's assays), on lines a correction names and lines it does not.
    const config = {
      sites: [{ code: 'HCF' }, { code: 'TR' }] as never,
      corrections: [{ written: 'HCF03-013G', meant: 'HCF03-012G', file: 'a.csv', line: 4, note: undefined }],
    };
    const ids = [
      'HCF03-013G',
      'HCF03-012G',
      formatSampleId({ siteCode: 'TR', round: 1, sequence: 7 }),
      'ZZ01-001A',
      'lab 17',
    ];
    const rows = fc.array(fc.tuple(fc.constantFrom(...ids), fc.integer({ min: 3, max: 5 })), { maxLength: 30 });
    for (const corrections of [config.corrections, []]) {
      fc.assert(
        fc.property(rows, (run) => {
          const check = plannedIdChecker({ ...config, corrections });
          for (const [id, line] of run)
            expect(check(id, line), `${id} on line ${line}`).toEqual(
              plannedIdChecker({ ...config, corrections })(id, line),
            );
        }),
        { numRuns: 200 },
      );
    }
  });
});

const NF_HEADER =
  'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status';
const nfLine = (sample: string, ct: string, call: string) =>
  `NV26-1,${sample},PRRSV NA/EU RT-PCR,${ct},${call},PASS,2026-08-31,2026-09-02,Final`;

function plan(ids: readonly string[]): PlannedRope[] {
  return ids.map((sampleId, index) => ({
    sampleId,
    siteId: 'hollow-creek',
    barnId: 'F1',
    penId: `A${index + 1}`,
    side: 'A',
    reason: 'routine',
    dueOn: '2026-08-31',
    plannedAt: '2026-08-20',
    afterRound: 2,
  }));
}

describe('a mistyped planned ID through the pipeline', () => {
  const ids = [11, 12, 13].map((sequence) => formatSampleId({ siteCode: 'HCF', round: 3, sequence }));
  const meant = ids[1]!;
  const written = meant.replace('-012', '-013');

  it('is refused, named with the planned ID it most likely meant, and rescued once a person confirms it', async () => {
    const ws = workspace();
    const store = ws.ws().store;
    store.replacePlan('hollow-creek', 2, plan(ids));
    const bytes =
      [
        NF_HEADER,
        nfLine(ids[0]!, 'Undetermined', 'Negative'),
        nfLine(written, '27.40', 'Positive'),
        nfLine(ids[2]!, 'Undetermined', 'Negative'),
      ].join('\n') + '\n';
    const first = await ws.drop('nvdl_results_2026-09-02.csv', bytes);
    // Two planned IDs are one error away (012 by the digit, 013 by its check character); 013 has
    // its result in this file, so the tube meant is 012, whose rope is still waiting.
    expect(first.receipt.rejectedRows).toMatchObject([
      { line: 3, code: 'bad-check-character', value: written, suggestedId: meant, candidateIds: [meant, ids[2]] },
    ]);
    expect(first.receipt.rejectedRows[0]!.message).toContain(
      `most likely ${meant} (planned for hollow-creek barn F1 pen A2, due 2026-08-31; one character differs)`,
    );
    expect(receiptText(first.receipt)).toContain(
      `confirm it in corrections.yaml (written: ${written}, meant: ${meant}, file: nvdl_results_2026-09-02.csv, line: 3)`,
    );
    // Stored with the refused row, for the pages.
    expect(
      ws.sql().all('SELECT line, value, suggested_id AS "suggestedId", candidate_ids AS candidates FROM rejected_rows'),
    ).toEqual([{ line: 3, value: written, suggestedId: meant, candidates: `${meant} ${ids[2]}` }]);
    // (The pipeline adds its own next-round plan beside this one: only these IDs are looked at.)
    const waiting = (ropes: readonly PlannedRope[]) =>
      ropes.map((rope) => rope.sampleId).filter((id) => ids.includes(id));
    expect(waiting(store.plannedWithoutResults('hollow-creek'))).toEqual([meant]);

    // Before a correction is confirmed, the same bytes are a duplicate.
    expect((await ws.drop('nvdl_results_2026-09-02.csv', bytes)).receipt.status).toBe('duplicate');
    fs.writeFileSync(
      path.join(ws.paths.configDir, 'corrections.yaml'),
      `sampleIds:\n  - written: ${written}\n    meant: ${meant}\n    file: nvdl_results_2026-09-02.csv\n    line: 3\n    note: tube label read again at the lab\n`,
    );
    ws.closeStore();
    const again = await ws.drop('nvdl_results_2026-09-02.csv', bytes);
    expect(again.receipt).toMatchObject({
      status: 'accepted',
      rows: { accepted: 1, duplicate: 2, rejected: 0 },
      sampleIdCorrections: [{ line: 3, written, meant }],
    });
    expect(again.receipt.warnings.join(' ')).toMatch(
      /read again because corrections\.yaml now gives the sample ID meant on line 3/,
    );
    expect(receiptText(again.receipt)).toContain(`line 3: ${written} read as ${meant}`);
    const rescued = ws.ws().store;
    expect(waiting(rescued.plannedWithoutResults('hollow-creek'))).toEqual([]);
    expect(rescued.currentResults().find((result) => result.sampleId === meant)).toMatchObject({
      resultClass: 'positive',
      ct: 27.4,
    });
    expect(
      ws.sql().all('SELECT sample_id_as_written AS written FROM results WHERE sample_id_as_written IS NOT NULL'),
    ).toEqual([{ written }]);
    // The refusal stays on record (nothing lost), once; the file keeps one record with its rows counted once.
    expect(rescued.counts()).toMatchObject({ files: 1, results: 3, rejectedRows: 1 });
    expect(rescued.files()[0]).toMatchObject({ rowsAccepted: 3, rowsRejected: 1 });
    // Read once more: nothing left to rescue, a duplicate.
    expect((await ws.drop('nvdl_results_2026-09-02.csv', bytes)).receipt.status).toBe('duplicate');
  });

  for (const thread of ['main thread', 'parse worker'] as const) {
    it(`applies a correction named by ID alone to a file read for the first time (${thread})`, async () => {
      const ws = workspace({
        configFiles: { 'corrections.yaml': `sampleIds:\n  - written: ${written}\n    meant: ${meant}\n` },
      });
      const deps = {
        config: ws.config(),
        store: ws.ws().store,
        now: () => FIXED_NOW,
        parseInWorkerFromBytes: thread === 'parse worker' ? 0 : Number.POSITIVE_INFINITY,
      };
      deps.store.replacePlan('hollow-creek', 2, plan(ids));
      const file = path.join(ws.paths.inbox, 'nvdl_b.csv');
      fs.writeFileSync(file, [NF_HEADER, nfLine(written, '27.40', 'Positive')].join('\n') + '\n');
      const receipt = await ingestFile(file, deps);
      expect(receipt).toMatchObject({
        status: 'accepted',
        rows: { accepted: 1, rejected: 0 },
        sampleIdCorrections: [{ line: 2, written, meant }],
        sites: ['hollow-creek'],
      });
    });
  }
});
