/**
 * End to end through processFile: a lab whose validated cutoffs are not the assay defaults
 * (PRRSV positive below 37, suspect below 40, cycle limit 45) sends an export in which one call
 * disagrees with the reading and one control failed. The outputs must read each result with
 * that lab's cutoffs (stored with the row), show the disagreement and write invalid as invalid.
 * Expected values by hand from the rows written.
 */
import fs from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { ropeSheet } from '../../src/demo/scenario.js';
import { LOAD_RAMP } from '../../src/report/html/palette.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const profile = fs
  .readFileSync(path.join(DEMO_CONFIG_DIR, 'labs', 'northfield.yaml'), 'utf8')
  .replace(
    'PRRSV NA/EU RT-PCR: { assay: PRRSV, positiveBelow: 36, suspectBelow: 40, cycleLimit: 40 }',
    'PRRSV NA/EU RT-PCR: { assay: PRRSV, positiveBelow: 37, suspectBelow: 40, cycleLimit: 45 }',
  );

const EXPORT = [
  'Case No,Sample ID,Test Name,Ct Value,Interpretation,Internal Control,Collection Date,Report Date,Report Status',
  'NV26-00001,E1,PRRSV NA/EU RT-PCR,31.00,Positive,PASS,2026-08-03,2026-08-06,Final',
  'NV26-00002,E2,PRRSV NA/EU RT-PCR,36.50,Negative,PASS,2026-08-03,2026-08-06,Final',
  'NV26-00003,E3,PRRSV NA/EU RT-PCR,,Invalid,FAIL,2026-08-03,2026-08-06,Final',
].join('\n');

describe('a lab with its own cutoffs, through the pipeline', () => {
  it('reads, tabulates and draws every result with that lab’s cutoffs and shows the disagreement', async () => {
    const ws = workspace({ configFiles: { 'labs/northfield.yaml': profile } });
    expect(profile).toContain('positiveBelow: 37, suspectBelow: 40, cycleLimit: 45');
    const site = ws.config().siteById.get('HOLLOW-CREEK')!;
    await ws.drop(
      'hollow-creek_ropes.csv',
      ropeSheet(site, [
        { sampleId: 'E1', barnId: 'F1', penId: 'A1', hungOn: '2026-08-03' },
        { sampleId: 'E2', barnId: 'F1', penId: 'A2', hungOn: '2026-08-03' },
        { sampleId: 'E3', barnId: 'F1', penId: 'A3', hungOn: '2026-08-03' },
      ]),
    );
    const outcome = await ws.drop('nvdl_results_2026-08-06.csv', EXPORT);
    expect(outcome.receipt).toMatchObject({ status: 'accepted', rows: { accepted: 3 } });
    const round = path.join(ws.paths.outbox, 'hollow-creek', 'r01-2026-08-03');

    const rows = parse(fs.readFileSync(path.join(round, 'summary.csv'), 'utf8'), { columns: true }) as Record<
      string,
      string
    >[];
    const pen = (id: string) => rows.find((row) => row.level === 'pen' && row.pen === id)!;
    // By hand: 36.5 < 37 is positive with this lab's cutoff; the lab called it "Negative".
    expect(pen('A2')).toMatchObject({
      class: 'positive',
      lab_call: 'Negative',
      call_differs: 'true',
      positive_below: '37',
      cycle_limit: '45',
      accession: 'NV26-00002',
      reported_on: '2026-08-06',
    });
    expect(pen('A1')).toMatchObject({
      class: 'positive',
      lab_call: 'Positive',
      call_differs: 'false',
      sequencing_candidate: 'true',
      lab: 'Northfield Veterinary Diagnostic Laboratory (invented)',
    });
    expect(pen('A3')).toMatchObject({ class: 'invalid', ct_history: 'r1:invalid' });

    const summary = fs.readFileSync(path.join(round, 'summary.html'), 'utf8');
    expect(summary).toContain('<tr data-disagreement="E2">');
    expect(summary).toContain('data-alert="call-differs"');

    // Ct 31.0 at the lab's 45-cycle limit: load 14, ramp step 3, labelled Ct 30-35 (load score L = C_max - Ct: common practice, no source).
    const clusters = fs.readFileSync(path.join(round, 'clusters.html'), 'utf8');
    const a1 = clusters.slice(clusters.indexOf('data-pen="A1"'));
    expect(a1.slice(0, a1.indexOf('</g>'))).toContain(`fill="${LOAD_RAMP[3]!.fill}"`);
    const legend = clusters.slice(clusters.indexOf('data-legend=""'));
    const item = legend.slice(legend.indexOf(`fill="${LOAD_RAMP[3]!.fill}"`));
    expect(item.slice(item.indexOf('</svg>') + 6, item.indexOf('</span>'))).toBe('Ct 30\u201335');
    expect(clusters).toContain('data-cutoff="37"');
    expect(clusters).not.toContain('data-cutoff="36"');
  });
});
