/**
 * The round model with antibody results (S/P ratios) beside PCR: counted by hand from the small
 * inputs below on the demo site hollow-creek. Among results of one class, the one standing for
 * a pen is the stronger: the lower Ct (more nucleic acid), the higher S/P (more antibody), as
 * the measure runs (Kittawornrat et al. 2012: higher S/P, more antibody; common practice for Ct).
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { buildSiteRounds, ctHistory, type ResultInput } from '../../src/rounds/roundModel.js';
import { sheetRopeIn } from '../helpers/results.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const site = config.siteById.get('HOLLOW-CREEK')!;
const rope = sheetRopeIn(site.id, 'F1');
let nextId = 1;
const antibody = (sampleId: string, sp: number | null, resultClass: ResultInput['resultClass']): ResultInput => ({
  id: nextId++,
  labId: 'northfield',
  sampleId,
  assayId: 'PRRSV-AB',
  measure: 'sp-ratio',
  ct: null,
  sp,
  resultClass,
  reason: 'test',
  loadBand: null,
  cycleLimit: null,
  positiveBelow: null,
  suspectBelow: null,
  positiveAtOrAbove: 0.4,
  suspectAtOrAbove: null,
  callDiffers: false,
  labCall: null,
});
const pcr = (sampleId: string, ct: number | null, resultClass: ResultInput['resultClass']): ResultInput => ({
  id: nextId++,
  labId: 'northfield',
  sampleId,
  assayId: 'PRRSV',
  ct,
  resultClass,
  reason: 'test',
  loadBand: null,
  cycleLimit: 40,
  positiveBelow: 36,
  suspectBelow: 40,
  callDiffers: false,
  labCall: null,
});

describe('buildSiteRounds with an antibody assay', () => {
  const ropes = [
    rope('S1', 'A1', '2026-08-03'),
    rope('S2', 'A1', '2026-08-04'),
    rope('S3', 'A2', '2026-08-03'),
    rope('S4', 'A3', '2026-08-03'),
    rope('S5', 'A1', '2026-08-17'),
  ];
  const results = [
    antibody('S1', 0.62, 'positive'),
    antibody('S2', 1.45, 'positive'),
    antibody('S3', 0.21, 'negative'),
    antibody('S4', null, 'invalid'),
    pcr('S1', 30, 'positive'),
    pcr('S3', null, 'negative'),
    antibody('S5', 1.8, 'positive'),
  ];
  const rounds = buildSiteRounds(site, ropes, results);
  const f1 = rounds[0]!.barns.find((barn) => barn.barnId === 'F1')!;
  const pen = (penId: string) => f1.pens.find((entry) => entry.penId === penId)!;

  it('records the measure of each assay of the round', () => {
    expect(rounds[0]!.measures).toEqual({ PRRSV: 'ct', 'PRRSV-AB': 'sp-ratio' });
  });

  it('lets the higher S/P of two positive ropes stand for the pen, the other listed', () => {
    // By hand: A1 has S/P 0.62 and 1.45, both positive: 1.45 stands, S1 is the other rope.
    expect(pen('A1').results['PRRSV-AB']).toMatchObject({
      sampleId: 'S2',
      sp: 1.45,
      measure: 'sp-ratio',
      otherSampleIds: ['S1'],
    });
    // The PCR result of the same pen is kept apart, under its own assay.
    expect(pen('A1').results['PRRSV']).toMatchObject({ sampleId: 'S1', ct: 30, measure: 'ct', sp: null });
  });

  it('gives an S/P result the load max(0, S/P), an invalid one 0, and no Ct cutoffs', () => {
    expect(pen('A1').results['PRRSV-AB']!.load).toBe(1.45);
    expect(pen('A2').results['PRRSV-AB']).toMatchObject({
      load: 0.21,
      resultClass: 'negative',
      cycleLimit: null,
      positiveBelow: null,
      positiveAtOrAbove: 0.4,
    });
    expect(pen('A3').results['PRRSV-AB']).toMatchObject({ load: 0, resultClass: 'invalid' });
  });

  it('tallies antibody results like any assay: 1 positive pen, 1 negative, 1 invalid', () => {
    expect(f1.byAssay['PRRSV-AB']).toMatchObject({
      positive: 1,
      negative: 1,
      invalid: 1,
      positivePens: ['A1'],
      testedPens: ['A1', 'A2'],
    });
  });

  it('lists the S/P cutoffs the round was read with, apart from the Ct ones', () => {
    expect(rounds[0]!.cutoffs).toEqual([
      {
        labId: 'northfield',
        assayId: 'PRRSV',
        measure: 'ct',
        positiveBelow: 36,
        suspectBelow: 40,
        cycleLimit: 40,
        positiveAtOrAbove: null,
        suspectAtOrAbove: null,
        results: 2,
      },
      {
        labId: 'northfield',
        assayId: 'PRRSV-AB',
        measure: 'sp-ratio',
        positiveBelow: null,
        suspectBelow: null,
        cycleLimit: null,
        positiveAtOrAbove: 0.4,
        suspectAtOrAbove: null,
        results: 4,
      },
    ]);
  });

  it('gives the S/P history of a pen across rounds', () => {
    expect(
      ctHistory(rounds, 'F1', 'A1', 'PRRSV-AB').map((point) => [point.round, point.measure, point.sp, point.ct]),
    ).toEqual([
      [1, 'sp-ratio', 1.45, null],
      [2, 'sp-ratio', 1.8, null],
    ]);
  });
});
