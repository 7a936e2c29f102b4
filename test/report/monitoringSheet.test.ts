/**
 * The rope list of a positive barn: each row with its reason in next-round.csv and on the rope
 * sheet, the sheet's legend for the two monitoring shapes, and a sizing line that does not count
 * the positive barn as surveyed. The barn: 2 x 18 pens, pen A5 positive in the last round.
 */
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { planNextRound } from '../../src/analysis/nextRound.js';
import { wordPlan } from '../../src/report/planWording.js';
import { OutbreakCache, siteSpatial } from '../../src/analysis/spatialRound.js';
import { buildSiteRounds } from '../../src/rounds/roundModel.js';
import { summariseSite } from '../../src/analysis/roundSummary.js';
import { wordSummary } from '../../src/report/summaryNotices.js';
import { roundAlerts } from '../../src/report/html/alerts.js';
import { renderClustersPage } from '../../src/report/html/clustersPage.js';
import { renderRopeSheetPage, sizingLine } from '../../src/report/html/ropeSheetPage.js';
import { nextRoundCsv } from '../../src/report/nextRoundFiles.js';
import { roundRopes, smallConfig } from '../analysis/fixtures.js';

function planAfter(positive: readonly number[]) {
  const config = smallConfig({ designPrevalence: 0.1, ropeSensitivity: 0.9 });
  const site = config.sites[0]!;
  const { ropes, results } = roundRopes('2026-08-03', 18, 'R1', positive);
  const rounds = buildSiteRounds(site, ropes, results);
  const confidence = siteConfidence(site, rounds);
  const cache = new OutbreakCache(config.analysis);
  const spatial = siteSpatial(site, rounds, confidence, config.analysis, cache);
  return {
    site,
    plan: wordPlan(
      planNextRound({ site, rounds, confidence, spatial, settings: config.analysis, cache, today: '2026-08-10' }),
    ),
  };
}

describe('the rope list of a positive barn', () => {
  const { site, plan } = planAfter([4]);

  it('gives each row its reason in next-round.csv', () => {
    // csv-parse reads the file as a reader would.
    const rows = parse(nextRoundCsv(plan), { columns: true }) as Record<string, string>[];
    expect(rows.find((row) => row.pen === 'A5')!.reason).toBe('re-rope');
    expect(rows.some((row) => row.reason === 'tracking')).toBe(true);
    expect(rows.some((row) => row.reason === 'routine')).toBe(false);
  });

  it('says why on the sheet and in its legend, and counts no detection for the positive barn', () => {
    const html = renderRopeSheetPage({ site, plan, notices: [] });
    // The checklist says the reason in one word; the legend says what it means.
    expect(html).toMatch(/<td>re-rope<\/td>/);
    expect(html).toContain('re-rope (positive pen: its Ct series goes on)');
    expect(html).toContain('tracking rope (same pens every round)');
    expect(sizingLine(plan)).toMatch(
      / re-rope, \d+ tracking \(positive barns, monitored\)\. (If they all come back negative on time, each barn has at least |No barn is surveyed for detection).* The positive barns are monitored and not counted in these figures\.$/,
    );
  });

  it('keeps the sheet of a negative site as it was', () => {
    const negative = planAfter([]);
    const html = renderRopeSheetPage({ site: negative.site, plan: negative.plan, notices: [] });
    expect(html).not.toContain('tracking rope');
    expect(sizingLine(negative.plan)).toMatch(
      /retest\. If they all come back negative on time, each barn has at least /,
    );
  });
});

describe('the freedom-reset alert of a positive round', () => {
  it('says the site is positive and when its freedom starts again (the program rule, 2 negative rounds)', () => {
    const config = smallConfig();
    const site = config.sites[0]!;
    const { ropes, results } = roundRopes('2026-08-03', 18, 'R1', [4]);
    const rounds = buildSiteRounds(site, ropes, results);
    const confidence = siteConfidence(site, rounds);
    const spatial = siteSpatial(site, rounds, confidence, config.analysis, new OutbreakCache(config.analysis));
    const alert = roundAlerts(summariseSite(config, site, rounds, confidence).map(wordSummary), spatial, 0).find(
      (entry) => entry.kind === 'freedom-reset',
    )!;
    expect(alert.action).toContain('the site is positive since round 1');
    expect(alert.detail).toMatch(
      /it starts again from the prior [\d.]+% once every positive barn has had 2 negative rounds in a row\.$/,
    );
  });
});

describe('the cluster review of a monitored barn', () => {
  it('says beside the statistics that the ropes were chosen around the positives, from the round after the barn became positive', () => {
    const config = smallConfig();
    const site = config.sites[0]!;
    const first = roundRopes('2026-08-03', 18, 'R1', [2, 3, 4]);
    const second = roundRopes('2026-08-17', 18, 'R2', [3, 4]);
    const rounds = buildSiteRounds(
      site,
      [...first.ropes, ...second.ropes],
      [...first.results, ...second.results.map((result) => ({ ...result, id: result.id + 100 }))],
    );
    const confidence = siteConfidence(site, rounds);
    const spatial = siteSpatial(site, rounds, confidence, config.analysis, new OutbreakCache(config.analysis));
    const summaries = summariseSite(config, site, rounds, confidence).map(wordSummary);
    const page = (index: number) =>
      renderClustersPage({
        site,
        summaries,
        spatial,
        index,
        assays: config.assayById,
        alpha: 0.05,
        alerts: [],
        notices: [],
      });
    // Round 1 found the barn: its ropes were placed by the layout, so its tests stand as tests.
    expect(page(0)).not.toContain('data-monitored');
    // Round 2 followed a positive round: the selection of ropes is not by chance (common practice, no source).
    expect(page(1)).toMatch(/data-monitored="">Monitored barn \(positive since round 1\)/);
  });
});
