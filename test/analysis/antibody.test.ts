/**
 * An antibody assay (S/P ratio) beside the PCR assay of the same pathogen, on the small
 * hand-checkable site of ./fixtures.ts (one barn of 36 pens, design prevalence one pen, prior
 * freedom 0.5, introduction 0.01 per 14 days). An antibody positive means exposure (infection or
 * vaccination), not necessarily current infection (common practice, no source): each assay keeps
 * its own detection and freedom (Martin, Cameron & Greiner 2007, method 6), so an antibody
 * positive resets only the antibody assay's freedom from exposure, never the PCR freedom.
 * Cutoff: S/P >= 0.4 (Kittawornrat et al. 2012, J Vet Diagn Invest 24:262).
 */
import { describe, expect, it } from 'vitest';
import { summariseSite } from '../../src/analysis/roundSummary.js';
import { wordSummary } from '../../src/report/summaryNotices.js';
import type { Config } from '../../src/config/types.js';
import { buildSiteRounds, type ResultInput } from '../../src/rounds/roundModel.js';
import { expectClose } from '../helpers/expectClose.js';
import { planFromRounds } from '../helpers/planFromRounds.js';
import { roundRopes, smallConfig } from './fixtures.js';

/** The S/P results of the same ropes: S/P 1.2 (positive) on the ropes named, 0.1 elsewhere. */
function antibodyResults(results: readonly ResultInput[], positive: readonly number[]): ResultInput[] {
  return results.map((result, i) => ({
    ...result,
    id: 1000 + i,
    assayId: 'PRRSV-AB',
    measure: 'sp-ratio',
    ct: null,
    sp: positive.includes(i) ? 1.2 : 0.1,
    resultClass: positive.includes(i) ? 'positive' : 'negative',
    cycleLimit: null,
    positiveAtOrAbove: 0.4,
    suspectAtOrAbove: null,
  }));
}

function analyse(config: Config, positiveAntibody: readonly number[], positivePcr: readonly number[] = []) {
  const site = config.sites[0]!;
  const { ropes, results } = roundRopes('2026-08-03', 18, 'R1', positivePcr);
  const rounds = buildSiteRounds(site, ropes, [...results, ...antibodyResults(results, positiveAntibody)]);
  const { plan, confidence, spatial } = planFromRounds(config, site, rounds, {
    today: '2026-08-10',
    measureOf: (id) => config.assayById.get(id)?.measure ?? 'ct',
  });
  return {
    site,
    rounds,
    confidence,
    spatial,
    plan,
    summaries: summariseSite(config, site, rounds, confidence).map(wordSummary),
  };
}

describe('an antibody positive beside negative PCR', () => {
  const config = smallConfig();
  const { confidence, summaries } = analyse(config, [4]);
  const pcr = confidence[0]!.sites.find((entry) => entry.assayId === 'PRRSV')!;
  const antibody = confidence[0]!.sites.find((entry) => entry.assayId === 'PRRSV-AB')!;

  it('never resets the PCR freedom: it builds as after any negative round', () => {
    // 18 of 36 pens, d = 1, Se = 1: SSe = 1/2; PF' = 0.5 / (1 - 0.5 * 0.5) = 2/3 (method 6, by hand).
    expect(pcr).toMatchObject({ measure: 'ct', positive: false, freedomReset: false });
    expectClose(pcr.freedom!, 2 / 3, { rel: 1e-12 }, 'PCR posterior after a negative round');
  });

  it("resets the antibody assay's own freedom from exposure", () => {
    expect(antibody).toMatchObject({
      measure: 'sp-ratio',
      positive: true,
      freedomReset: true,
      freedom: 0,
      positiveBarns: ['B1'],
    });
    // Its detection uses its own rope sensitivity (1 here): the same 1/2 as the PCR's.
    expectClose(antibody.detectionConfidence, 0.5, { rel: 1e-12 }, 'antibody SSe');
  });

  it('says in the summary that antibody means exposure and that the PCR freedom is not reset', () => {
    const summary = summaries[0]!;
    expect(summary.assays.find((assay) => assay.id === 'PRRSV-AB')).toMatchObject({
      measure: 'sp-ratio',
      pairedWith: 'PRRSV',
    });
    expect(summary.pairs).toEqual([{ antibody: 'PRRSV-AB', pcr: 'PRRSV' }]);
    expect(summary.notices.join('\n')).toContain('not necessarily current infection');
    expect(summary.notices.join('\n')).toContain('the freedom of PRRSV RT-PCR is not reset');
    expect(summary.notices.join('\n')).not.toContain('the probability of freedom for Test Site is reset');
  });
});

describe('an antibody round with negative results', () => {
  it('builds freedom from exposure with the rope sensitivity of the antibody assay, apart from the PCR', () => {
    // ropeSensitivity PRRSV-AB 0.5, PRRSV 1: 18 of 36 pens, d = 1: SSe = 18/36 * 0.5 = 1/4
    // (method 2 with d = 1: n Se / N); PF' = 0.5 / (1 - 0.25 * 0.5) = 4/7.
    const config = smallConfig({ ropeSensitivity: { default: 1, 'PRRSV-AB': 0.5 } });
    const { confidence } = analyse(config, []);
    const antibody = confidence[0]!.sites.find((entry) => entry.assayId === 'PRRSV-AB')!;
    expectClose(antibody.detectionConfidence, 0.25, { rel: 1e-12 }, 'antibody SSe with Se 0.5');
    expectClose(antibody.freedom!, 4 / 7, { rel: 1e-12 }, 'antibody posterior');
    expectClose(
      confidence[0]!.sites.find((entry) => entry.assayId === 'PRRSV')!.freedom!,
      2 / 3,
      { rel: 1e-12 },
      'PCR posterior',
    );
  });
});

describe('the next round after an antibody positive', () => {
  it('retests the antibody-positive pen and draws no follow-up ring around it; the PCR assay sizes the plan', () => {
    // A lower antibody sensitivity would size the plan if antibody assays counted: they do not.
    const config = smallConfig({
      designPrevalence: 0.1,
      ropeSensitivity: { default: 0.9, 'PRRSV-AB': 0.5 },
      followUpRadius: 1.5,
    });
    const { plan } = analyse(config, [4]);
    // Rope 4 of roundRopes hangs in pen A5.
    expect(plan.ropes.filter((rope) => rope.reason === 'retest').map((rope) => rope.penId)).toEqual(['A5']);
    expect(plan.ropes.filter((rope) => rope.reason === 'follow-up')).toEqual([]);
    expect(plan.barns[0]!.sizing).toMatchObject({ assayId: 'PRRSV', sensitivity: 0.9 });
    expect(plan.notes.join('\n')).toContain(
      'Antibody positive without virus in B1 A5: a retest rope each, to be tested by PCR',
    );
  });

  it('still rings a PCR positive with follow-up ropes', () => {
    const config = smallConfig({ designPrevalence: 0.1, ropeSensitivity: 0.9, followUpRadius: 1.5 });
    const { plan } = analyse(config, [4], [4]);
    expect(plan.ropes.some((rope) => rope.reason === 'follow-up')).toBe(true);
    // A pen positive for both is not retested for its antibody: the virus already says more.
    expect(plan.ropes.filter((rope) => rope.reason === 'retest')).toEqual([]);
  });
});

describe('the spatial review of an antibody assay', () => {
  it('gives each sampled pen its S/P and the clusters their S/P, and no Ct', () => {
    const config = smallConfig();
    const { spatial } = analyse(config, [0, 1, 2]);
    const antibody = spatial[0]!.assays.find((assay) => assay.assayId === 'PRRSV-AB')!;
    expect(antibody.measure).toBe('sp-ratio');
    expect(antibody.spByPen['B1/A1']).toBe(1.2);
    expect(antibody.spByPen['B1/A4']).toBe(0.1);
    // A1, A2, A3 are fence neighbours: one cluster of three, S/P 1.2 each.
    const cluster = antibody.report.barns[0]!.clusters.find((entry) => entry.size === 3)!;
    expect(cluster.minCt).toBeNull();
    expect(antibody.clusterSp).toEqual([{ barnId: 'B1', cluster: cluster.index, meanSp: 1.2, maxSp: 1.2 }]);
  });
});
