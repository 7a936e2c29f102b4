/**
 * Groups of pigs on the outputs (barns run all-in/all-out: common practice, no source): summary.csv,
 * the summary page and the barn maps name the group of each barn's round, an empty barn is
 * "empty, no group" with no figure and nothing missing, and a pen's history starts afresh with a
 * new group. The scenario (test/analysis/groupScenario.ts) is worked out by hand beside each check.
 */
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { summariseSite } from '../../src/analysis/roundSummary.js';
import { wordSummary } from '../../src/report/summaryNotices.js';
import { OutbreakCache, siteSpatial } from '../../src/analysis/spatialRound.js';
import { roundAlerts } from '../../src/report/html/alerts.js';
import { renderClustersPage } from '../../src/report/html/clustersPage.js';
import { renderSummaryPage } from '../../src/report/html/summaryPage.js';
import { SUMMARY_COLUMNS, summaryCsv } from '../../src/report/summaryCsv.js';
import { smallConfig } from '../analysis/fixtures.js';
import { G1, G2, scenario } from '../analysis/groupScenario.js';

const config = smallConfig();

function outputs(groups = [G1, G2]) {
  const { site, rounds, confidence } = scenario(groups);
  const summaries = summariseSite(config, site, rounds, confidence).map(wordSummary);
  const spatial = siteSpatial(site, rounds, confidence, config.analysis, new OutbreakCache(config.analysis));
  const csv = (index: number) => parse(summaryCsv(summaries[index]!), { columns: true }) as Record<string, string>[];
  return { site, summaries, spatial, csv };
}

describe('groups on summary.csv', () => {
  const { csv } = outputs();
  const barnRow = (index: number, barn: string) => csv(index).find((row) => row.level === 'barn' && row.barn === barn)!;

  it('adds its columns at the end, after the existing ones', () => {
    // README: columns are stable and new ones are added at the end (common practice, no source).
    expect(SUMMARY_COLUMNS.indexOf('likely_meant_id')).toBe(54);
    const at = SUMMARY_COLUMNS.indexOf('group');
    expect(at).toBeGreaterThan(54);
    expect(SUMMARY_COLUMNS.slice(at, at + 4)).toEqual(['group', 'group_placed_on', 'barn_empty', 'barn_freedom']);
  });

  it('names the group and its placement on the barn and pen rows; none on a barn without groups', () => {
    expect(barnRow(0, 'B1')).toMatchObject({ group: 'G1', group_placed_on: '2026-08-01', barn_empty: 'false' });
    expect(barnRow(3, 'B1')).toMatchObject({ group: 'G2', group_placed_on: '2026-09-01' });
    expect(csv(3).find((row) => row.level === 'pen' && row.barn === 'B1' && row.pen === 'A1')).toMatchObject({
      group: 'G2',
    });
    expect(barnRow(0, 'B2')).toMatchObject({ group: '', group_placed_on: '', barn_empty: 'false' });
  });

  it('gives the empty barn no detection figure and no missing rope', () => {
    // Round 3 (24 Aug): B1 between G1's close-out (20 Aug) and G2's placement (1 Sep).
    expect(barnRow(2, 'B1')).toMatchObject({
      barn_empty: 'true',
      group: '',
      detection_confidence: '',
      missing_sample_ids: '',
      barn_freedom: '',
      ropes_needed: '',
    });
    expect(csv(2).find((row) => row.level === 'site')!.missing_sample_ids).toBe('');
    // No pen of the empty barn is in use: the site's N that round is B2's 36 pens alone (72 in round 1).
    expect(barnRow(2, 'B1').pens_in_use).toBe('0');
    expect(csv(2).find((row) => row.level === 'site')!.pens_in_use).toBe('36');
    expect(csv(0).find((row) => row.level === 'site')!.pens_in_use).toBe('72');
  });

  it('restarts the barn freedom at the new group: round 4 equals round 1 (0.5 / (1 - 0.5 * 0.5) = 2/3, Martin, Cameron & Greiner 2007)', () => {
    expect(barnRow(0, 'B1').barn_freedom).toBe('0.666667');
    expect(barnRow(3, 'B1').barn_freedom).toBe('0.666667');
    // B2 has no groups: its round 4 continues the chain, above the restart value.
    expect(Number(barnRow(3, 'B2').barn_freedom)).toBeGreaterThan(2 / 3);
  });

  it('starts a pen\u2019s history afresh with the group (by hand: pen A1 of B1 was roped in rounds 1, 2 and 4)', () => {
    const pen = (rows: Record<string, string>[]) =>
      rows.find((row) => row.level === 'pen' && row.barn === 'B1' && row.pen === 'A1')!;
    expect(pen(csv(3)).ct_history).toBe('r4:ND');
    expect(pen(outputs([]).csv(3)).ct_history).toBe('r1:ND r2:ND r4:ND');
  });
});

describe('groups on the pages', () => {
  const { site, summaries, spatial } = outputs();
  const page = (index: number) =>
    renderSummaryPage({ summary: summaries[index]!, alerts: roundAlerts(summaries, spatial, index), notices: [] });
  const barnSection = (html: string, barnId: string) =>
    html.slice(
      html.indexOf(`<section class="barn" data-barn="${barnId}"`),
      html.indexOf('</section>', html.indexOf(`data-barn="${barnId}"`)),
    );

  it('says the empty barn is empty, no group, with no figure and no missing-ropes alert', () => {
    const html = page(2);
    const b1 = barnSection(html, 'B1');
    expect(b1).toContain('data-empty=""');
    expect(b1).toContain('Empty, no group this round');
    expect(b1).not.toContain('Detection confidence');
    expect(roundAlerts(summaries, spatial, 2).filter((alert) => alert.kind === 'missing-ropes')).toEqual([]);
  });

  it('names the group in the barn\u2019s heading and gives the group\u2019s freedom', () => {
    const b1 = barnSection(page(3), 'B1');
    expect(b1).toContain('group Autumn (G2, placed 2026-09-01)');
    expect(b1).toContain('data-group-freedom="G2"');
    expect(b1).toContain('first round of the group: started from the prior');
    expect(barnSection(page(3), 'B2')).not.toContain('group ');
  });

  it('names the group on the barn map', () => {
    const html = renderClustersPage({
      site,
      summaries,
      spatial,
      index: 3,
      assays: config.assayById,
      alpha: 0.05,
      alerts: [],
      notices: [],
    });
    expect(html).toContain('B1, PRRSV, round 4, group Autumn (G2, placed 2026-09-01)');
  });
});
