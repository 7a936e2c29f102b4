/**
 * The round model: tallies per barn and assay, the worst result standing for a pen, missing
 * ropes. Expected values are counted by hand from the small inputs below on the demo site
 * hollow-creek (barn F1: 2 x 20 pens, B20 empty, A10 out of use, so 38 pens in use).
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { buildSiteRounds, ctHistory, type ResultInput, type RopeInput } from '../../src/rounds/roundModel.js';
import { expectClose } from '../helpers/expectClose.js';
import { resultInput } from '../helpers/results.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const site = config.siteById.get('HOLLOW-CREEK')!;

const rope = (sampleId: string, barnId: string, penId: string, hungOn: string): RopeInput => ({
  sampleId,
  siteId: site.id,
  barnId,
  penId,
  hungOn,
  source: 'sheet',
});
let nextId = 1;
const result = (
  sampleId: string,
  assayId: string,
  resultClass: ResultInput['resultClass'],
  ct: number | null,
): ResultInput =>
  resultInput({
    id: nextId++,
    sampleId,
    assayId,
    ct,
    resultClass,
  });

describe('buildSiteRounds', () => {
  const ropes = [
    rope('S1', 'F1', 'A1', '2026-08-03'),
    rope('S2', 'F1', 'A1', '2026-08-04'), // a second rope in A1 in the same round
    rope('S3', 'F1', 'A2', '2026-08-03'), // never came back
    rope('S4', 'F1', 'B1', '2026-08-03'),
    rope('S5', 'F1', 'B2', '2026-08-03'),
    rope('S6', 'F2', '01', '2026-08-04'),
    rope('S7', 'F1', 'A1', '2026-08-17'), // next round
  ];
  const results = [
    result('S1', 'PRRSV', 'negative', null),
    result('S2', 'PRRSV', 'positive', 30),
    result('S1', 'IAV', 'negative', null),
    result('S4', 'PRRSV', 'invalid', null),
    result('S5', 'PRRSV', 'suspect', 37),
    result('S6', 'PRRSV', 'negative', null),
    result('S7', 'PRRSV', 'positive', 27),
    result('OTHER-SITE', 'PRRSV', 'positive', 20),
  ];
  const rounds = buildSiteRounds(site, ropes, results);
  const f1 = rounds[0]!.barns.find((barn) => barn.barnId === 'F1')!;

  it('forms the rounds of the site from the ropes, ignoring results whose sample is not a rope there', () => {
    expect(rounds.map((round) => round.id)).toEqual(['r01-2026-08-03', 'r02-2026-08-17']);
    expect(rounds[0]!.assays).toEqual(['IAV', 'PRRSV']);
    expect(rounds[0]!.barns.map((barn) => barn.barnId)).toEqual(['F1', 'F2', 'F3']);
  });

  it('counts pens in use as the survey population and ropes hung, returned and missing', () => {
    // By hand: 40 pens - B20 (empty) - A10 (out of use) = 38.
    expect(f1.pensInUse).toBe(38);
    expect(f1.ropesHung).toBe(5);
    expect(f1.ropesReturned).toBe(4);
    expect(f1.missingSampleIds).toEqual(['S3']);
  });

  it('lets the worst result stand for a pen with two ropes and lists the other sample', () => {
    const a1 = f1.pens.find((pen) => pen.penId === 'A1')!;
    expect(a1.sampleIds).toEqual(['S1', 'S2']);
    expect(a1.results['PRRSV']).toMatchObject({ resultClass: 'positive', sampleId: 'S2', otherSampleIds: ['S1'] });
    // Load score (common practice, no source): L = max(0, 40 - 30) = 10.
    expectClose(a1.results['PRRSV']!.load, 10, { abs: 1e-12 }, 'load of Ct 30 at a 40-cycle limit');
  });

  it('tallies pens per assay: invalid pens are not tested pens, and every barn has a tally for every assay', () => {
    // By hand: A1 positive, B1 invalid, B2 suspect, A2 missing.
    expect(f1.byAssay['PRRSV']).toMatchObject({
      positive: 1,
      suspect: 1,
      negative: 0,
      invalid: 1,
      positivePens: ['A1'],
      suspectPens: ['B2'],
      invalidPens: ['B1'],
    });
    expect([...f1.byAssay['PRRSV']!.testedPens].sort()).toEqual(['A1', 'B2']);
    expect(f1.byAssay['IAV']).toMatchObject({ negative: 1, testedPens: ['A1'] });
    const f3 = rounds[0]!.barns.find((barn) => barn.barnId === 'F3')!;
    expect(f3.byAssay['PRRSV']).toMatchObject({ positive: 0, negative: 0, testedPens: [] });
    expect(f3.ropesHung).toBe(0);
  });

  it('among results of the same class keeps the lower Ct (more nucleic acid) for the pen', () => {
    const twin = buildSiteRounds(
      site,
      [rope('T1', 'F1', 'A3', '2026-08-03'), rope('T2', 'F1', 'A3', '2026-08-03')],
      [result('T1', 'PRRSV', 'positive', 31), result('T2', 'PRRSV', 'positive', 24)],
    );
    expect(twin[0]!.barns[0]!.pens[0]!.results['PRRSV']).toMatchObject({
      sampleId: 'T2',
      ct: 24,
      otherSampleIds: ['T1'],
    });
  });

  it('scores an invalid result with load 0 even when it carries a Ct', () => {
    const [round] = buildSiteRounds(
      site,
      [rope('V1', 'F1', 'A4', '2026-08-03')],
      [result('V1', 'PRRSV', 'invalid', 22)],
    );
    expect(round!.barns[0]!.pens[0]!.results['PRRSV']!.load).toBe(0);
  });

  it('follows a pen’s Ct across rounds', () => {
    expect(ctHistory(rounds, 'F1', 'A1', 'PRRSV').map((point) => [point.round, point.resultClass, point.ct])).toEqual([
      [1, 'positive', 30],
      [2, 'positive', 27],
    ]);
  });
});
