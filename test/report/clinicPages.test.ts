/**
 * The clinic-facing parts of the pages, on the demo scenario and on hand-made values: the three
 * states of a barn's detection against the target, the "since last round" table, the plan page
 * (everything next-round.json says of the schedules, the freedom forecast and the coverage), and
 * the missing planned ropes on the maps and in the legend.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BarnConfidence } from '../../src/analysis/confidence.js';
import { sinceLastRound } from '../../src/analysis/sinceLastRound.js';
import { alertItem, penSpan, roundAlerts } from '../../src/report/html/alerts.js';
import { renderBarnMap, textWidth } from '../../src/report/html/barnMap.js';
import { resultMarks } from '../../src/report/html/mapMarks.js';
import { resultsLegend } from '../../src/report/html/page.js';
import { renderPlanPage } from '../../src/report/html/planPage.js';
import { againstTarget } from '../../src/report/html/summaryBarn.js';
import { renderSummaryPage, sinceBlock } from '../../src/report/html/summaryPage.js';
import { buildDemoPages, type DemoPages } from '../helpers/browser.js';
import { twoRowLayout } from '../helpers/layouts.js';

let demo: DemoPages;
beforeAll(async () => {
  demo = await buildDemoPages();
}, 120_000);
afterAll(() => demo?.cleanup());

const confidence = (detectionConfidence: number, ropesNeeded: number | null = 20): BarnConfidence =>
  ({
    detectionConfidence,
    ropesNeeded,
    targetReachable: ropesNeeded !== null,
    censusConfidence: 0.9,
    roundsNeededIfUnreachable: 2,
  }) as BarnConfidence;

describe('a barn against the target', () => {
  it('is met, below because ropes were lost, or below as sized', () => {
    expect(againstTarget({ invalid: 0, confidence: confidence(0.96) }, 0, 0.95).state).toBe('met');
    expect(againstTarget({ invalid: 0, confidence: confidence(0.96) }, 3, 0.95).state).toBe('met');
    const lost = againstTarget({ invalid: 1, confidence: confidence(0.8) }, 2, 0.95);
    expect(lost).toEqual({
      state: 'lost',
      text: 'ropes lost (2 ropes without a result, 1 invalid): 20 valid ropes would reach it',
    });
    expect(againstTarget({ invalid: 0, confidence: confidence(0.8, null) }, 0, 0.95)).toEqual({
      state: 'as-sized',
      text: 'as sized: one round cannot reach it (best 90.0%); 2 rounds would',
    });
  });

  it('shades on the demo pages only the barns that lost ropes, the actionable ones', () => {
    let shaded = 0;
    let rows = 0;
    for (const analysis of demo.analyses) {
      analysis.summaries.forEach((summary) => {
        const html = renderSummaryPage({ summary, alerts: [], notices: [] });
        for (const barn of summary.barns) {
          // An empty barn (between two groups of pigs) has no figure to hold against the target.
          if (barn.empty) continue;
          const lostRopes = barn.missingSampleIds.length;
          for (const tally of barn.assays) {
            rows++;
            const match = new RegExp(
              `data-barn="${barn.barnId}"[\\s\\S]*?<tr data-assay="${tally.assayId}">[\\s\\S]*?data-against="([a-z-]+)"`,
            ).exec(html);
            expect(
              match,
              `${summary.round.id} ${barn.barnId} ${tally.assayId}: a row against the target`,
            ).not.toBeNull();
            const cell = match![1];
            const below = tally.confidence.detectionConfidence < summary.program.targetConfidence;
            // By the definition above: below target and some rope lost (no result or invalid) is the shaded state.
            // A positive barn is monitored, not held to the detection target (its page says so instead).
            const expected =
              tally.confidence.status?.state === 'positive'
                ? 'monitored'
                : !below
                  ? 'met'
                  : lostRopes + tally.invalid > 0
                    ? 'lost'
                    : 'as-sized';
            expect(cell, `${summary.round.id} ${barn.barnId} ${tally.assayId}`).toBe(expected);
            if (cell === 'lost') shaded++;
          }
        }
      });
    }
    expect(shaded).toBeGreaterThan(0);
    expect(shaded).toBeLessThan(rows / 4);
  });
});

describe('the since-last-round table', () => {
  it('lists per barn the pens newly positive, cleared, missing and invalid, as sinceLastRound gives them', () => {
    const analysis = demo.analyses[0]!;
    for (let index = 1; index < analysis.rounds.length; index++) {
      const since = sinceLastRound(analysis.rounds[index - 1]!, analysis.rounds[index]!);
      const html = sinceBlock(analysis.summaries[index]!, since);
      for (const entry of since.newlyPositive)
        expect(html).toMatch(
          new RegExp(
            `data-since="${entry.barnId}" data-since-assay="${entry.assayId}"><td>[^<]*</td><td>[^<]*</td><td>[^<]*\\b${entry.penId}\\b`,
          ),
        );
      for (const entry of since.cleared)
        expect(html).toMatch(
          new RegExp(
            `data-since="${entry.barnId}" data-since-assay="${entry.assayId}">(<td>[^<]*</td>){3}<td>[^<]*\\b${entry.penId}\\b`,
          ),
        );
      for (const entry of since.missing)
        expect(html).toMatch(new RegExp(`data-since="${entry.barnId}"[\\s\\S]*?${entry.penId ?? entry.sampleId}`));
      // One row per barn and assay with a change, or one row for a barn with missing ropes only.
      const keys = new Set(
        [...since.newlyPositive, ...since.cleared, ...since.invalid].map((entry) => `${entry.barnId}/${entry.assayId}`),
      );
      const onlyMissing = new Set(
        since.missing
          .map((entry) => entry.barnId)
          .filter((barnId) => ![...keys].some((key) => key.startsWith(`${barnId}/`))),
      );
      expect((html.match(/data-since="/g) ?? []).length).toBe(keys.size + onlyMissing.size);
    }
  });

  it('marks the missing planned ropes of a round on its maps, and the legend explains the mark', () => {
    const analysis = demo.analyses[0]!;
    const index = analysis.summaries.findIndex((summary) =>
      summary.barns.some((barn) => barn.missingSampleIds.length > 0),
    );
    expect(index).toBeGreaterThanOrEqual(0);
    const summary = analysis.summaries[index]!;
    const barn = summary.barns.find((entry) => entry.missingSampleIds.length > 0)!;
    const marks = resultMarks(summary, barn.barnId, 'PRRSV');
    for (const sampleId of barn.missingSampleIds)
      expect(marks.get(barn.missingPens[sampleId]!)?.resultClass, sampleId).toBe('missing');
    const layoutBarn = analysis.site.barns.find((entry) => entry.id === barn.barnId)!;
    const svg = renderBarnMap(layoutBarn, { key: 'k', scale: 30, detail: 'full', title: 't', results: marks });
    expect((svg.match(/data-result="missing"/g) ?? []).length).toBe(new Set(Object.values(barn.missingPens)).size);
    expect(resultsLegend('k', 40)).toMatch(
      /data-legend-missing=""[\s\S]*?stroke-dasharray="3 2"[\s\S]*?>M<\/text><\/svg>no result \(missing\)/,
    );
  });
});

describe('the plan page', () => {
  it('shows the sizing, the freedom forecast, the schedule comparison and the coverage of next-round.json', () => {
    for (const analysis of demo.analyses) {
      const plan = analysis.plan;
      const html = renderPlanPage({ plan, notices: [] });
      for (const barn of plan.barns) {
        expect(html).toContain(`data-plan-barn="${barn.barnId}"`);
        expect(html).toContain(`data-plan-coverage="${barn.barnId}"`);
        // The detection planned is the figure of the model that sized the ropes (the one the plan promises); a positive barn is monitored.
        const row = new RegExp(`<tr data-plan-barn="${barn.barnId}">(.*?)</tr>`).exec(html)![1]!;
        if (barn.monitoring) expect(row).toContain('monitored');
        else
          expect(row).toContain(
            (100 * barn.sizing.plannedDetection).toFixed(1) === '100.0'
              ? '> 99.9%'
              : `${(100 * barn.sizing.plannedDetection).toFixed(1)}%`,
          );
      }
      expect(html).toContain(plan.sizing.ifNegative.replace(/&/g, '&amp;'));
      for (const schedule of plan.schedules) {
        expect(html).toContain(`data-plan-schedules="${schedule.barnId}"`);
        for (const option of schedule.static) expect(html).toContain(`data-schedule="${option.label}"`);
      }
      if (plan.freedom) {
        // The forecast's three values, as the page formats percentages (one decimal).
        for (const value of [plan.freedom.onTime, plan.freedom.withoutRound, plan.freedom.missed])
          expect(html).toContain((100 * value).toFixed(1) === '100.0' ? '> 99.9%' : `${(100 * value).toFixed(1)}%`);
        expect(html).toContain('data-case="on-time"');
        expect(html).toContain('data-case="missed"');
      } else {
        expect(html).toContain('data-plan-freedom="none"');
      }
    }
    expect(demo.analyses.some((analysis) => analysis.plan.freedom !== null)).toBe(true);
  });
});

describe('map labels', () => {
  it('widens the left margin to hold long row labels', () => {
    const barn = { id: 'W', name: 'Wide', layout: twoRowLayout({ rowLabels: ['West', 'Middle'] }) };
    const svg = renderBarnMap(barn, { key: 'w', scale: 30, detail: 'full', title: 't' });
    // The label is centred in the margin: the margin must exceed the estimated width of "Middle".
    const x = Number(/<text class="row-label" x="([\d.]+)"[^>]*>Middle</.exec(svg)![1]);
    expect(2 * x).toBeGreaterThanOrEqual(textWidth('Middle', 12) + 10);
  });
});

describe('alert texts', () => {
  it('spans a cluster from its first to its last pen in layout order', () => {
    // By hand: of the positives in layout order A3, A4, B3, B9, the cluster {B9, A3, B3} runs A3 to B9.
    expect(penSpan(['B9', 'A3', 'B3'], ['A3', 'A4', 'B3', 'B9'])).toBe('A3\u2013B9');
    expect(penSpan(['A4'], ['A3', 'A4'])).toBe('A4');
  });

  it('opens every alert of the demo with its action and keeps the detail for the second line', () => {
    for (const analysis of demo.analyses) {
      analysis.summaries.forEach((_, index) => {
        for (const alert of roundAlerts(analysis.summaries, analysis.spatial, index)) {
          expect(alert.message).toBe(`${alert.action}. ${alert.detail}`);
          expect(alert.action.length, alert.action).toBeGreaterThan(0);
          expect(alert.detail.length, alert.kind).toBeGreaterThan(0);
          // Rendered: the action in bold first, the detail after a line break.
          expect(alertItem(alert)).toMatch(
            /^<li data-alert="[a-z-]+"><strong class="action">[^<]+<\/strong><br><span class="detail">[^<]+<\/span><\/li>$/,
          );
        }
      });
    }
  });
});
