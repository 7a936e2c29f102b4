/**
 * Antibody results (S/P ratio, higher = more antibody) in the outputs: their own map shading and
 * legend, S/P trends, S/P columns in the CSVs, and the summary's plain words that an antibody
 * positive means exposure, not necessarily current infection, and never resets the PCR freedom
 * (common practice, no source). Cutoff S/P >= 0.4 (Kittawornrat et al. 2012, J Vet Diagn Invest
 * 24:262). The shading steps at c/2, c, 2c and 4c of the positive cutoff c are ropewatch's own
 * reading aid (common practice, no source); every expected value below is by hand.
 */
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { summariseSite } from '../../src/analysis/roundSummary.js';
import { wordSummary } from '../../src/report/summaryNotices.js';
import { OutbreakCache, siteSpatial } from '../../src/analysis/spatialRound.js';
import { buildSiteRounds, type ResultInput } from '../../src/rounds/roundModel.js';
import { clustersCsv } from '../../src/report/clustersCsv.js';
import { roundAlerts } from '../../src/report/html/alerts.js';
import { renderBarnMap } from '../../src/report/html/barnMap.js';
import { renderSpTrend, spAxis } from '../../src/report/html/charts.js';
import { renderClustersPage } from '../../src/report/html/clustersPage.js';
import { resultMarks } from '../../src/report/html/mapMarks.js';
import { spLegendShades } from '../../src/report/html/page.js';
import { LOAD_RAMP, spStep } from '../../src/report/html/palette.js';
import { pairReading } from '../../src/report/html/summaryBarn.js';
import { renderSummaryPage } from '../../src/report/html/summaryPage.js';
import { summaryCsv } from '../../src/report/summaryCsv.js';
import { roundRopes, smallConfig } from '../analysis/fixtures.js';
import { twoRowLayout } from '../helpers/layouts.js';

describe('S/P shading', () => {
  it('steps at c/2, c, 2c and 4c of the positive cutoff, bounds in the upper step', () => {
    // c = 0.4: steps begin at 0.2, 0.4, 0.8 and 1.6.
    expect([0.19, 0.2, 0.39, 0.4, 0.79, 0.8, 1.59, 1.6, 3].map((sp) => spStep(sp, 0.4))).toEqual([
      0, 1, 1, 2, 2, 3, 3, 4, 4,
    ]);
    // c = 1.0 (Henao-Diaz et al. 2021, Prev Vet Med 188:105250): 0.4 is below c/2 = 0.5.
    expect(spStep(0.4, 1.0)).toBe(0);
    expect(spStep(-0.05, 0.4)).toBe(0);
    expect(() => spStep(Number.NaN, 0.4)).toThrow(RangeError);
    expect(() => spStep(0.5, 0)).toThrow(RangeError);
  });

  it('has a legend of its own with the S/P range of each shade', () => {
    const legend = spLegendShades([{ positiveAtOrAbove: 0.4, labs: [] }]);
    expect(legend).toContain('data-measure="sp-ratio"');
    expect(legend).toContain('darker = more antibody; positive at S/P \u2265 0.4');
    for (const range of ['S/P &lt; 0.2', 'S/P 0.2\u20130.4', 'S/P 0.4\u20130.8', 'S/P 0.8\u20131.6', 'S/P \u2265 1.6'])
      expect(legend).toContain(range);
    // Two labs with two cutoffs: each range given per cutoff, and whose each is.
    const two = spLegendShades([
      { positiveAtOrAbove: 0.4, labs: ['Lab A'] },
      { positiveAtOrAbove: 1, labs: ['Lab B'] },
    ]);
    expect(two).toContain('S/P 0.4\u20130.8 (cutoff 0.4) or 1\u20132 (cutoff 1)');
    expect(two).toContain('0.4 (Lab A); 1 (Lab B)');
  });

  it('fills a pen with the step given for it, not with its load', () => {
    const svg = renderBarnMap(
      { id: 'X', name: 'X', layout: twoRowLayout() },
      {
        key: 'k',
        scale: 20,
        detail: 'full',
        title: 't',
        results: new Map([['A1', { resultClass: 'positive', load: 1.2, shade: 3 }]]),
      },
    );
    expect(svg).toMatch(new RegExp(`data-pen="A1"[\\s\\S]*?fill="${LOAD_RAMP[3]!.fill}"`));
    // The load of an S/P is no Ct load: the tooltip names none.
    expect(svg).not.toContain('load 1.2');
    expect(() =>
      renderBarnMap(
        { id: 'X', name: 'X', layout: twoRowLayout() },
        {
          key: 'k',
          scale: 20,
          detail: 'full',
          title: 't',
          results: new Map([['A1', { resultClass: 'positive', load: 1, shade: 5 }]]),
        },
      ),
    ).toThrow(RangeError);
  });
});

describe('S/P trend', () => {
  it('runs from 0 up to the highest S/P or cutoff, rounded up to 0.5 and at least 1', () => {
    expect(spAxis([0.1, 0.3], [0.4])).toEqual({ bottom: 0, top: 1 });
    expect(spAxis([1.45, 2.1], [0.4])).toEqual({ bottom: 0, top: 2.5 });
    expect(spAxis([-0.2], [1])).toEqual({ bottom: -0.5, top: 1 });
    expect(() => spAxis([Number.POSITIVE_INFINITY], [])).toThrow(RangeError);
  });

  it('draws a higher S/P higher, the cutoff dashed, and an invalid result as a cross below the axis', () => {
    const svg = renderSpTrend(
      [
        { round: 1, label: 'r01', sp: 0.2, resultClass: 'negative' },
        { round: 2, label: 'r02', sp: 1.4, resultClass: 'positive' },
        { round: 3, label: 'r03', sp: null, resultClass: 'invalid' },
      ],
      { title: 'Pen A5', cutoffs: [{ value: 0.4, label: 'S/P 0.4 (Lab A)' }], rounds: [] },
    );
    const cy = (label: string) =>
      Number(new RegExp(`cy="([\\d.]+)"[^>]*data-point="sp"><title>${label}`).exec(svg)![1]);
    expect(cy('r02')).toBeLessThan(cy('r01'));
    expect(svg).toContain('data-cutoff="0.4"');
    expect(svg).toContain('data-point="invalid"');
    expect(svg).toContain('S/P (up = more antibody)');
  });
});

/** The small site of ../analysis/fixtures.ts: 18 ropes on pens A1..A18; PCR negative, antibody as named. */
function analyse(positiveAntibody: readonly number[], positivePcr: readonly number[] = []) {
  const config = smallConfig();
  const site = config.sites[0]!;
  const { ropes, results } = roundRopes('2026-08-03', 18, 'R1', positivePcr);
  const antibody: ResultInput[] = results.map((result, i) => ({
    ...result,
    id: 1000 + i,
    assayId: 'PRRSV-AB',
    measure: 'sp-ratio',
    ct: null,
    sp: positiveAntibody.includes(i) ? 1.2 : i === 5 ? 0.21 : 0.1,
    resultClass: positiveAntibody.includes(i) ? 'positive' : 'negative',
    cycleLimit: null,
    positiveAtOrAbove: 0.4,
    suspectAtOrAbove: null,
  }));
  const rounds = buildSiteRounds(site, ropes, [...results, ...antibody]);
  const confidence = siteConfidence(site, rounds);
  const spatial = siteSpatial(site, rounds, confidence, config.analysis, new OutbreakCache(config.analysis));
  const summaries = summariseSite(config, site, rounds, confidence).map(wordSummary);
  return { config, site, summaries, spatial };
}

describe('summary of a round with an antibody assay', () => {
  const { summaries, spatial, config, site } = analyse([0, 1, 2], [1]);
  const summary = summaries[0]!;
  const alerts = roundAlerts(summaries, spatial, 0);

  it('writes the S/P columns of an antibody pen and leaves its Ct columns empty', () => {
    const rows = parse(summaryCsv(summary), { columns: true }) as Record<string, string>[];
    const pen = rows.find((row) => row.level === 'pen' && row.pen === 'A6' && row.assay === 'PRRSV-AB')!;
    expect(pen).toMatchObject({
      measure: 'sp-ratio',
      sp: '0.21',
      sp_history: 'r1:0.21',
      class: 'negative',
      positive_at_or_above: '0.4',
      suspect_at_or_above: '',
    });
    expect(pen).toMatchObject({ ct: '', ct_history: '', positive_below: '', suspect_below: '', cycle_limit: '' });
    const pcrPen = rows.find((row) => row.level === 'pen' && row.pen === 'A6' && row.assay === 'PRRSV')!;
    expect(pcrPen).toMatchObject({ measure: 'ct', ct_history: 'r1:ND', sp: '', sp_history: '', cycle_limit: '40' });
    expect(rows.find((row) => row.level === 'site' && row.assay === 'PRRSV-AB')).toMatchObject({
      measure: 'sp-ratio',
      freedom_reset: 'true',
    });
    expect(rows.find((row) => row.level === 'site' && row.assay === 'PRRSV')).toMatchObject({
      measure: 'ct',
      freedom_reset: 'true',
    });
  });

  it('says on the page that antibody means exposure and never resets the PCR freedom, and shows both per pen', () => {
    const html = renderSummaryPage({ summary, alerts, notices: [] });
    expect(html).toContain('data-antibody="PRRSV-AB"');
    expect(html).toContain('not necessarily current infection');
    expect(html).toContain('it never resets the freedom of PRRSV RT-PCR');
    expect(html).toMatch(
      /data-assay="PRRSV-AB" data-measure="sp-ratio"[\s\S]*?freedom from exposure reset by an antibody positive round/,
    );
    // Pens with virus or antibody, both results side by side (A2 both, A1 and A3 antibody only).
    expect(html).toMatch(
      /data-pair-pen="A1"><td>A1<\/td><td>n\.d\. \(negative\)<\/td><td>S\/P 1\.2 \(positive\)<\/td><td>antibody without virus/,
    );
    expect(html).toMatch(
      /data-pair-pen="A2"><td>A2<\/td><td>28 \(positive\)<\/td><td>S\/P 1\.2 \(positive\)<\/td><td>virus and antibody/,
    );
    expect(html).toContain('<th class="num">Ct or S/P</th>');
  });

  it('words the alerts of an antibody assay as exposure', () => {
    const reset = alerts.find((alert) => alert.kind === 'freedom-reset' && alert.assayId === 'PRRSV-AB')!;
    expect(reset.message).toContain('The freedom of PRRSV RT-PCR is not reset');
    const first = alerts.find((alert) => alert.kind === 'first-positive' && alert.assayId === 'PRRSV-AB')!;
    expect(first.message).toContain('retest these pens by PCR');
    expect(alerts.find((alert) => alert.kind === 'first-positive' && alert.assayId === 'PRRSV')!.message).not.toContain(
      'Antibody',
    );
  });

  it('draws the antibody map by S/P with its own legend, the PCR result in the tooltip, and S/P trends', () => {
    const marks = resultMarks(summary, 'B1', 'PRRSV-AB');
    // A1: S/P 1.2 at c = 0.4 is in [0.8, 1.6): step 3. A6: 0.21 in [0.2, 0.4): step 1.
    expect(marks.get('A1')).toMatchObject({ resultClass: 'positive', shade: 3 });
    expect(marks.get('A6')).toMatchObject({ resultClass: 'negative', shade: 1 });
    expect(marks.get('A2')!.note).toBe(
      'S/P 1.2 (Northfield Veterinary Diagnostic Laboratory (invented): positive at S/P \u2265 0.4); PRRSV: Ct 28 (positive)',
    );
    expect(resultMarks(summary, 'B1', 'PRRSV').get('A2')!.shade).toBeUndefined();
    const html = renderClustersPage({
      site,
      summaries,
      spatial,
      index: 0,
      assays: config.assayById,
      alpha: 0.05,
      alerts,
      notices: [],
    });
    const antibodySection = html.slice(html.indexOf('data-assay-section="PRRSV-AB"'));
    expect(antibodySection).toContain('data-legend="" data-measure="sp-ratio"');
    expect(antibodySection).toContain('S/P trend per antibody-positive pen');
    expect(antibodySection).toContain('data-trend="" data-measure="sp-ratio"');
    expect(antibodySection).toContain('highest S/P 1.20, mean S/P 1.20');
    expect(antibodySection).toContain('Moran\u2019s I on S/P');
    expect(html).toContain('PRRSV-AB positive at S/P \u2265 0.4');
    // The PCR section keeps the Ct legend.
    const pcrSection = html.slice(
      html.indexOf('data-assay-section="PRRSV"'),
      html.indexOf('data-assay-section="PRRSV-AB"'),
    );
    expect(pcrSection).not.toContain('data-measure="sp-ratio"');
  });

  it('writes the S/P of antibody pens and clusters into clusters.csv', () => {
    const rows = parse(clustersCsv(spatial[0]!), { columns: true }) as Record<string, string>[];
    expect(rows.find((row) => row.level === 'pen' && row.assay === 'PRRSV-AB' && row.pen === 'A1')).toMatchObject({
      measure: 'sp-ratio',
      sp: '1.2',
      ct: '',
    });
    expect(rows.find((row) => row.level === 'cluster' && row.assay === 'PRRSV-AB')).toMatchObject({
      measure: 'sp-ratio',
      cluster_pens: 'A1 A2 A3',
      mean_sp: '1.2',
      max_sp: '1.2',
      min_ct: '',
    });
    expect(rows.find((row) => row.level === 'pen' && row.assay === 'PRRSV' && row.pen === 'A1')).toMatchObject({
      measure: 'ct',
      sp: '',
    });
  });
});

describe('PCR and antibody together', () => {
  it('reads each pair of results in plain words', () => {
    expect(pairReading({ resultClass: 'positive' }, { resultClass: 'negative' })).toContain('no antibody yet');
    expect(pairReading({ resultClass: 'negative' }, { resultClass: 'positive' })).toContain('antibody without virus');
    expect(pairReading(undefined, { resultClass: 'positive' })).toContain('retest the pen by PCR');
    expect(pairReading({ resultClass: 'positive' }, { resultClass: 'positive' })).toContain('virus and antibody');
    expect(pairReading({ resultClass: 'suspect' }, { resultClass: 'positive' })).toContain('retest');
    expect(pairReading({ resultClass: 'negative' }, { resultClass: 'negative' })).toBe('neither virus nor antibody');
  });
});

/**
 * The ELISA results on the same ropes as `results`: the first rope antibody positive (S/P 1.2),
 * the others negative (S/P 0.1), against the cutoff 0.4 (Kittawornrat et al. 2012).
 */
function antibodyResults(results: readonly ResultInput[], firstId: number): ResultInput[] {
  return results.map((result, i) => ({
    ...result,
    id: firstId + i,
    assayId: 'PRRSV-AB',
    measure: 'sp-ratio',
    ct: null,
    sp: i === 0 ? 1.2 : 0.1,
    resultClass: i === 0 ? 'positive' : 'negative',
    cycleLimit: null,
    positiveAtOrAbove: 0.4,
    suspectAtOrAbove: null,
  }));
}

describe('a new positive barn after a round without the assay', () => {
  it('says the assay was not tested in the previous round, rather than that the barn had none', () => {
    // Two rounds; the antibody ELISA only in the second (as every four weeks beside fortnightly PCR).
    const config = smallConfig();
    const site = config.sites[0]!;
    const first = roundRopes('2026-08-03', 6, 'R1');
    const second = roundRopes('2026-08-17', 6, 'R2');
    const antibody = antibodyResults(second.results, 2000);
    // An earlier antibody positive elsewhere makes this one a "new barn" rather than a "first" positive.
    const earlier = roundRopes('2026-07-20', 1, 'R0');
    const earlierAntibody: ResultInput = { ...antibody[0]!, id: 3000, sampleId: earlier.ropes[0]!.sampleId };
    const rounds = buildSiteRounds(
      site,
      [...earlier.ropes, ...first.ropes, ...second.ropes],
      [...earlier.results, earlierAntibody, ...first.results, ...second.results, ...antibody],
    );
    const confidence = siteConfidence(site, rounds);
    const spatial = siteSpatial(site, rounds, confidence, config.analysis, new OutbreakCache(config.analysis));
    const summaries = summariseSite(config, site, rounds, confidence).map(wordSummary);
    const alert = roundAlerts(summaries, spatial, 2).find((entry) => entry.kind === 'new-positive-barn')!;
    expect(alert.message).toContain('PRRSV-AB was not tested in the previous round');
  });
});

describe('earlier rounds on the cluster review', () => {
  it('captions a small map of a round without the assay "not tested", never "0 +"', () => {
    const config = smallConfig();
    const site = config.sites[0]!;
    const first = roundRopes('2026-08-03', 6, 'R1');
    const second = roundRopes('2026-08-17', 6, 'R2');
    const antibody = antibodyResults(second.results, 4000);
    const rounds = buildSiteRounds(
      site,
      [...first.ropes, ...second.ropes],
      [...first.results, ...second.results, ...antibody],
    );
    const confidence = siteConfidence(site, rounds);
    const spatial = siteSpatial(site, rounds, confidence, config.analysis, new OutbreakCache(config.analysis));
    const summaries = summariseSite(config, site, rounds, confidence).map(wordSummary);
    const html = renderClustersPage({
      site,
      summaries,
      spatial,
      index: 1,
      assays: config.assayById,
      alpha: 0.05,
      alerts: [],
      notices: [],
    });
    const antibodySection = html.slice(html.indexOf('data-assay-section="PRRSV-AB"'));
    expect(antibodySection).toContain('r01 2026-08-03: not tested');
    expect(
      html.slice(html.indexOf('data-assay-section="PRRSV"'), html.indexOf('data-assay-section="PRRSV-AB"')),
    ).not.toContain('not tested');
  });
});
