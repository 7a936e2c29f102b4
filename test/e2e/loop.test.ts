/**
 * The full loop a producer and a lab live: a round goes in, ropewatch plans the next one, the lab
 * reports on exactly the planned tube labels with no rope sheet, and every result lands in its
 * pen; a tube that never comes back is listed as missing in the next round's summary.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { parseSampleId } from '../../src/plan/sampleId.js';
import { makeWorkspace, type TestWorkspace } from '../helpers/workspace.js';

let workspace: TestWorkspace | undefined;
afterEach(() => workspace?.cleanup());

describe('the next-round rope list closes the loop', () => {
  it('maps results for planned sample IDs back to their pens with no rope sheet, and lists the tube that never came back', async () => {
    workspace = makeWorkspace();
    const site = workspace.config().siteById.get('HOLLOW-CREEK')!;
    const f1 = site.barnById.get('F1')!;
    const pens = f1.pens.filter((pen) => pen.status === 'in-use').slice(0, 8);
    const ropes = pens.map((pen, index) => ({
      sampleId: `HC-FARM-${index + 1}`,
      barnId: 'F1',
      penId: pen.id,
      hungOn: '2026-08-03',
    }));
    await workspace.drop('hollow-creek_ropes_2026-08-03.csv', ropeSheet(site, ropes));
    await workspace.drop(
      'nvdl_results_2026-08-06.csv',
      northfieldExport(
        ropes.map((rope) => ({ sampleId: rope.sampleId, assay: 'PRRSV', ct: null, collectedOn: rope.hungOn })),
        '2026-08-06',
        100,
      ),
    );

    const planFile = path.join(workspace.paths.outbox, 'hollow-creek', 'next-round.json');
    const plan = JSON.parse(fs.readFileSync(planFile, 'utf8')) as {
      round: number;
      ropes: { sampleId: string; barnId: string; penId: string; reason: string }[];
    };
    expect(plan.round).toBe(2);
    expect(plan.ropes.length).toBeGreaterThan(3);
    // Every planned ID parses with a valid check character (ISO/IEC 7064 MOD 37-2) and is unique.
    for (const rope of plan.ropes) expect(parseSampleId(rope.sampleId).ok).toBe(true);
    expect(new Set(plan.ropes.map((rope) => rope.sampleId)).size).toBe(plan.ropes.length);

    // The lab reports every planned tube but the last one; lower-case and spaces as a lab might type them.
    const returned = plan.ropes.slice(0, -1);
    const lost = plan.ropes.at(-1)!;
    const rows = returned.map((rope, index) => ({
      sampleId: ` ${rope.sampleId.toLowerCase()} `,
      assay: 'PRRSV' as const,
      ct: index === 0 ? 31.2 : null,
      collectedOn: '2026-08-17',
    }));
    const { receipt } = await workspace.drop('nvdl_results_2026-08-20.csv', northfieldExport(rows, '2026-08-20', 200));
    expect(receipt.status).toBe('accepted');
    expect(receipt.rows.accepted).toBe(returned.length);
    expect(receipt.unresolvedSampleIds).toEqual([]);

    const roundDir = fs
      .readdirSync(path.join(workspace.paths.outbox, 'hollow-creek'))
      .find((name) => name.startsWith('r02-'))!;
    const summary = JSON.parse(
      fs.readFileSync(path.join(workspace.paths.outbox, 'hollow-creek', roundDir, 'summary.json'), 'utf8'),
    ) as {
      pens: { barnId: string; penId: string; sampleIds: string[]; results: Record<string, { resultClass: string }> }[];
      barns: { barnId: string; missingSampleIds: string[] }[];
    };
    for (const rope of returned) {
      const pen = summary.pens.find((entry) => entry.sampleIds.includes(rope.sampleId));
      expect(pen, `planned ${rope.sampleId}`).toMatchObject({ barnId: rope.barnId, penId: rope.penId });
    }
    expect(
      summary.pens.find((entry) => entry.sampleIds.includes(returned[0]!.sampleId))!.results['PRRSV']!.resultClass,
    ).toBe('positive');
    const lostBarn = summary.barns.find((barn) => barn.barnId === lost.barnId)!;
    expect(lostBarn.missingSampleIds).toContain(lost.sampleId);
  });

  it('refuses a planned ID whose check character was mistyped, instead of placing it in the wrong pen', async () => {
    workspace = makeWorkspace();
    const site = workspace.config().siteById.get('HOLLOW-CREEK')!;
    const pen = site.barnById.get('F2')!.pens[0]!;
    await workspace.drop(
      'hollow-creek_ropes_2026-08-03.csv',
      ropeSheet(site, [{ sampleId: 'HC-1', barnId: 'F2', penId: pen.id, hungOn: '2026-08-03' }]),
    );
    await workspace.drop(
      'nvdl_results_2026-08-06.csv',
      northfieldExport([{ sampleId: 'HC-1', assay: 'PRRSV', ct: null, collectedOn: '2026-08-03' }], '2026-08-06', 1),
    );
    const plan = JSON.parse(
      fs.readFileSync(path.join(workspace.paths.outbox, 'hollow-creek', 'next-round.json'), 'utf8'),
    ) as { ropes: { sampleId: string }[] };
    const good = plan.ropes[0]!.sampleId;
    // Change one digit of the sequence: MOD 37-2 detects every single substitution (ISO/IEC 7064).
    const digitAt = good.length - 2;
    const typo = good.slice(0, digitAt) + String((Number(good[digitAt]) + 1) % 10) + good.slice(digitAt + 1);
    const { receipt } = await workspace.drop(
      'nvdl_results_2026-08-20.csv',
      northfieldExport([{ sampleId: typo, assay: 'PRRSV', ct: null, collectedOn: '2026-08-17' }], '2026-08-20', 2),
    );
    expect(receipt.rejectedRows.map((row) => row.code)).toEqual(['bad-check-character']);
    expect(receipt.rejectedRows[0]!.line).toBe(2);
  });
});

describe('rewriting one site reads only that site', () => {
  it("gives a site's current results only for samples on its own ropes or plan, never another site's", async () => {
    workspace = makeWorkspace();
    const site = workspace.config().siteById.get('HOLLOW-CREEK')!;
    const pen = site.barnById.get('F1')!.pens[0]!;
    await workspace.drop(
      'hollow-creek_ropes_2026-08-03.csv',
      ropeSheet(site, [{ sampleId: 'HC-ONLY-1', barnId: 'F1', penId: pen.id, hungOn: '2026-08-03' }]),
    );
    // A Tamsin Ridge tube that carries its own location (sample pattern) and an unplaced sample.
    const rows = ['HC-ONLY-1', 'TR-N1-07-20260805', 'NOWHERE-9'].map((sampleId) => ({
      sampleId,
      assay: 'PRRSV' as const,
      ct: null,
      collectedOn: '2026-08-05',
    }));
    await workspace.drop('nvdl_results_2026-08-06.csv', northfieldExport(rows, '2026-08-06', 1));
    const store = workspace.ws().store;
    expect(store.currentResults('hollow-creek').map((result) => result.sampleId)).toEqual(['HC-ONLY-1']);
    expect(store.currentResults('tamsin-ridge').map((result) => result.sampleId)).toEqual(['TR-N1-07-20260805']);
    expect(
      store
        .currentResults()
        .map((result) => result.sampleId)
        .sort(),
    ).toEqual(['HC-ONLY-1', 'NOWHERE-9', 'TR-N1-07-20260805']);
  });
});

describe('a refused file keeps what it was recognised as', () => {
  it('records a lab export refused for broken quoting as a results file of that lab, with its reason', async () => {
    workspace = makeWorkspace();
    const header =
      'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status';
    const { receipt } = await workspace.drop(
      'nvdl_broken.csv',
      `${header}\nNV-1,HC-1,PRRSV NA/EU RT-PCR,"31.2,Positive,PASS,2026-08-03,2026-08-06,Final\n`,
    );
    expect(receipt).toMatchObject({
      status: 'rejected',
      kind: 'results',
      lab: 'northfield',
      reason: { code: 'malformed-csv' },
    });
    const [file] = workspace.ws().store.files();
    expect(file).toMatchObject({
      name: 'nvdl_broken.csv',
      status: 'rejected',
      kind: 'results',
      labId: 'northfield',
      reasonCode: 'malformed-csv',
    });
  });
});
