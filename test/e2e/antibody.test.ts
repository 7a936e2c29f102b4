/**
 * End to end through processFile with the demo configuration: a rope sheet and one Northfield
 * export carrying PCR results and antibody ELISA results (S/P) of the same ropes. Northfield reads
 * the ELISA positive at S/P >= 0.4 (Kittawornrat et al. 2012, J Vet Diagn Invest 24:262). The
 * failure this guards against: an ELISA row refused as unknown-assay, and, mapped to the PCR
 * assay as that refusal suggested, S/P 0.21 (the lab's negative) stored as a positive Ct and the
 * PCR freedom reset to 0. An antibody positive means exposure, not necessarily current infection
 * (common practice, no source): it resets only the antibody assay's freedom from exposure.
 */
import fs from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { northfieldExport, ropeSheet } from '../../src/demo/scenario.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const ROPES = [
  { sampleId: 'HC-0803-F1-01', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
  { sampleId: 'HC-0803-F1-02', barnId: 'F1', penId: 'A4', hungOn: '2026-08-03' },
  { sampleId: 'HC-0803-F3-01', barnId: 'F3', penId: 'N2', hungOn: '2026-08-04' },
];

describe('antibody ELISA results beside PCR, end to end', () => {
  it('stores S/P 0.21 as negative, an S/P of 0.52 as an antibody positive, and leaves the PCR freedom alone', async () => {
    const ws = workspace();
    await ws.drop('hollow-creek_ropes.csv', ropeSheet(ws.config().siteById.get('HOLLOW-CREEK')!, ROPES));
    const exported = northfieldExport(
      [
        ...ROPES.map((rope) => ({
          sampleId: rope.sampleId,
          assay: 'PRRSV' as const,
          ct: null,
          collectedOn: rope.hungOn,
        })),
        { sampleId: 'HC-0803-F1-01', assay: 'PRRSV-AB', sp: 0.21, collectedOn: '2026-08-03' },
        { sampleId: 'HC-0803-F1-02', assay: 'PRRSV-AB', sp: 0.05, collectedOn: '2026-08-03' },
        { sampleId: 'HC-0803-F3-01', assay: 'PRRSV-AB', sp: 0.52, collectedOn: '2026-08-04' },
      ],
      '2026-08-06',
      1,
    );
    const { receipt } = await ws.drop('nvdl_results_2026-08-06.csv', exported);
    // By hand: 3 PCR rows and 3 ELISA rows, all read; the lab's calls agree with every reading.
    expect(receipt).toMatchObject({ status: 'accepted', rows: { accepted: 6, rejected: 0 } });
    const round = path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-03');
    const summary = JSON.parse(fs.readFileSync(path.join(round, 'summary.json'), 'utf8'));
    expect(summary.disagreements).toEqual([]);
    const site = (id: string) => summary.assays.find((assay: { id: string }) => assay.id === id).site;
    expect(site('PRRSV')).toMatchObject({ measure: 'ct', positive: false, freedomReset: false });
    expect(site('PRRSV').freedom).toBeGreaterThan(0.5);
    expect(site('PRRSV-AB')).toMatchObject({
      measure: 'sp-ratio',
      positive: true,
      freedomReset: true,
      freedom: 0,
      positiveBarns: ['F3'],
    });
    const rows = parse(fs.readFileSync(path.join(round, 'summary.csv'), 'utf8'), { columns: true }) as Record<
      string,
      string
    >[];
    expect(rows.find((row) => row.level === 'pen' && row.pen === 'A1' && row.assay === 'PRRSV-AB')).toMatchObject({
      class: 'negative',
      sp: '0.21',
      ct: '',
      lab_call: 'Negative',
      call_differs: 'false',
    });
    expect(rows.find((row) => row.level === 'pen' && row.pen === 'N2' && row.assay === 'PRRSV-AB')).toMatchObject({
      class: 'positive',
      sp: '0.52',
    });
    const html = fs.readFileSync(path.join(round, 'summary.html'), 'utf8');
    expect(html).toContain('not necessarily current infection');
    expect(html).toContain('data-pairs="PRRSV-AB"');
    // The next round retests the antibody-positive pen (by PCR) instead of ringing it.
    const plan = JSON.parse(fs.readFileSync(path.join(ws.paths.outbox, 'hollow-creek', 'next-round.json'), 'utf8'));
    const f3 = plan.ropes.filter((rope: { barnId: string }) => rope.barnId === 'F3');
    expect(
      f3.filter((rope: { reason: string }) => rope.reason === 'retest').map((rope: { penId: string }) => rope.penId),
    ).toEqual(['N2']);
    expect(f3.filter((rope: { reason: string }) => rope.reason === 'follow-up')).toEqual([]);
  });

  it('refuses an S/P cell holding a not-detected word, naming the line and the column', async () => {
    const ws = workspace();
    const bytes = Buffer.from(
      'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status\n' +
        'NV26-1,HC-0803-F1-01,PRRSV Oral Fluid Antibody ELISA,Undetermined,Negative,,2026-08-03,2026-08-06,Final\n' +
        'NV26-2,HC-0803-F1-02,PRRSV Oral Fluid Antibody ELISA,0.31,Negative,,2026-08-03,2026-08-06,Final\n',
      'utf8',
    );
    const { receipt } = await ws.drop('nvdl_elisa.csv', bytes);
    expect(receipt.rows).toMatchObject({ accepted: 1, rejected: 1 });
    expect(receipt.rejectedRows[0]).toMatchObject({
      line: 2,
      field: 'Ct Value',
      code: 'bad-sp',
      value: 'Undetermined',
    });
  });
});
