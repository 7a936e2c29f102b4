/**
 * Results as the lab meant them, on every output: the lab's call beside the reading (and every
 * disagreement in front of a person), invalid shown as invalid, each result drawn with the
 * cutoffs of the lab that reported it, where each result came from, and sequencing candidates.
 * The scenario (labReadingsScenario.ts) mixes a 40-cycle lab (positive below 36) and a 45-cycle
 * lab (positive below 37); every expected value is worked out by hand beside its check.
 */
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { CAUTIONS } from '../../src/report/cautions.js';
import { roundAlerts } from '../../src/report/html/alerts.js';
import { LOAD_RAMP, loadStep } from '../../src/report/html/palette.js';
import { renderClustersPage } from '../../src/report/html/clustersPage.js';
import { escapeHtml } from '../../src/report/html/escape.js';
import { mixedReadings } from '../../src/report/html/resultCells.js';
import { caseList, renderSummaryPage } from '../../src/report/html/summaryPage.js';
import { dateSpan, SUMMARY_COLUMNS, summaryCsv } from '../../src/report/summaryCsv.js';
import { analyseScenario, config, site } from './labReadingsScenario.js';

const { summaries, spatial } = analyseScenario();
const OSTERMARK = 'Ostermark Animal Health Laboratory (invented)';
const alerts = roundAlerts(summaries, spatial, 1);
const summaryHtml = renderSummaryPage({ summary: summaries[1]!, alerts, notices: [] });
const clustersHtml = renderClustersPage({
  site,
  summaries,
  spatial,
  index: 1,
  assays: config.assayById,
  alpha: 0.05,
  alerts,
  notices: [],
});

type CsvRecord = Record<string, string>;
const rows = parse(summaryCsv(summaries[1]!), { columns: true }) as CsvRecord[];
const penRow = (pen: string) => rows.find((row) => row.level === 'pen' && row.pen === pen)!;

/** The SVG of the trend chart titled "Pen <id>". */
function trend(penId: string): string {
  const charts = clustersHtml.split('<svg').filter((part) => part.includes('data-trend=""'));
  const chart = charts.find((part) => part.includes(`<title>Pen ${penId}</title>`));
  if (!chart) throw new Error(`no trend for ${penId}`);
  return chart.slice(0, chart.indexOf('</svg>'));
}

describe('summary.csv', () => {
  it('adds the new columns at the end, after the existing ones', () => {
    // README: columns are stable and new ones are added at the end (common practice, no source).
    expect(SUMMARY_COLUMNS.indexOf('ct_history')).toBe(36);
    expect(SUMMARY_COLUMNS.slice(37, 47)).toEqual([
      'lab_call',
      'call_differs',
      'lab',
      'accession',
      'collected_on',
      'reported_on',
      'positive_below',
      'suspect_below',
      'cycle_limit',
      'sequencing_candidate',
    ]);
    // The S/P columns of antibody assays came later still.
    expect(SUMMARY_COLUMNS.slice(47, 52)).toEqual([
      'measure',
      'sp',
      'sp_history',
      'positive_at_or_above',
      'suspect_at_or_above',
    ]);
  });

  it('gives a pen row the lab call and whether it differs from the reading', () => {
    // By hand: A3's Ct 36.5 is below ostermark's 37, so positive; the lab called it "Negative".
    expect(penRow('A3')).toMatchObject({ class: 'positive', ct: '36.5', lab_call: 'Negative', call_differs: 'true' });
    expect(penRow('A1')).toMatchObject({ class: 'positive', lab_call: 'Positive', call_differs: 'false' });
  });

  it('writes an invalid result as invalid in the history, whatever Ct came with it', () => {
    // A1 round 1: control failed, no Ct; A2 round 2: control failed beside a Ct of 30. An invalid
    // result is a retest, never a negative (common practice, no source).
    expect(penRow('A1').ct_history).toBe('r1:invalid r2:31');
    expect(penRow('A2').ct_history).toBe('r1:ND r2:invalid');
    expect(penRow('A3').ct_history).toBe('r1:28 r2:36.5');
  });

  it('names the lab, its case number, the dates and the cutoffs behind a pen row', () => {
    expect(penRow('A1')).toMatchObject({
      lab: OSTERMARK,
      accession: 'OA-0817',
      collected_on: '2026-08-17',
      reported_on: '2026-08-20',
      positive_below: '37',
      suspect_below: '40',
      cycle_limit: '45',
    });
  });

  it('gives site and barn rows every lab and case number, and the collection dates as an ISO 8601 interval', () => {
    // ISO 8601-1:2019 time interval "start/end": the round's ropes were collected on the 17th and the 18th.
    const site = rows.find((row) => row.level === 'site')!;
    expect(site).toMatchObject({
      lab: OSTERMARK,
      accession: 'OA-0817',
      collected_on: '2026-08-17/2026-08-18',
      reported_on: '2026-08-20',
    });
    expect(rows.find((row) => row.level === 'barn' && row.barn === 'F1')).toMatchObject({
      accession: 'OA-0817',
      collected_on: '2026-08-17/2026-08-18',
    });
    expect(rows.find((row) => row.level === 'barn' && row.barn === 'F2')).toMatchObject({ lab: '', accession: '' });
    expect(dateSpan('2026-08-17', '2026-08-17')).toBe('2026-08-17');
    expect(dateSpan(null, null)).toBeNull();
  });

  it('flags a positive pen below the sequencing threshold, and no other', () => {
    // assays.yaml (demo): PRRSV sequencingBelow 32. A1 Ct 31.0 < 32: candidate; A3 Ct 36.5: not;
    // A2 invalid: not. Sequencing below a Ct threshold is common practice, no source.
    expect([penRow('A1'), penRow('A2'), penRow('A3')].map((row) => row.sequencing_candidate)).toEqual([
      'true',
      'false',
      'false',
    ]);
  });
});

describe('the lab call differing from the reading', () => {
  it('is counted by an alert of its own', () => {
    const differs = alerts.filter((alert) => alert.kind === 'call-differs');
    expect(differs).toHaveLength(1);
    expect(differs[0]!.action).toMatch(/^Check the cutoffs in the lab profile/);
    expect(differs[0]!.detail).toMatch(/^2 results where the lab's own call differs/);
    expect(differs[0]!.numbers.results).toBe(2);
    expect(differs[0]!.message).toContain('F1: 2');
    expect(roundAlerts(summaries, spatial, 0).some((alert) => alert.kind === 'call-differs')).toBe(false);
  });

  it('names every disagreeing sample on the summary page with both readings', () => {
    expect(summaryHtml).toContain('data-disagreements="2"');
    const row = (sample: string) => {
      const start = summaryHtml.indexOf(`<tr data-disagreement="${sample}">`);
      expect(start, sample).toBeGreaterThan(-1);
      return summaryHtml.slice(start, summaryHtml.indexOf('</tr>', start));
    };
    expect(row('R2-3')).toContain('<strong>Negative</strong>');
    expect(row('R2-3')).toContain('<strong>positive</strong>');
    expect(row('R2-3')).toContain('36,5');
    // The second rope of A3 does not stand for the pen, yet its disagreement is shown.
    expect(row('R2-4')).toContain('<strong>Positive</strong>');
    expect(row('R2-4')).toContain('<strong>negative</strong>');
    expect(row('R2-4')).toContain('another result stands for it');
  });
});

describe('the summary page', () => {
  it('names the case of each finding, and its lab and cutoffs when the round mixes readings', () => {
    const row = (html: string, pen: string) => {
      const start = html.indexOf(`<tr data-pen="${pen}" data-assay="PRRSV">`);
      expect(start, pen).toBeGreaterThan(-1);
      return html.slice(start, html.indexOf('</tr>', start));
    };
    // Round 2 is one lab with one set of cutoffs: named once, under "Where the results came from".
    expect(mixedReadings(summaries[1]!)).toBe(false);
    expect(row(summaryHtml, 'A1')).toContain('<td>OA-0817</td>');
    expect(row(summaryHtml, 'A1')).toContain('sequencing candidate');
    expect(row(summaryHtml, 'A2')).toContain('invalid');
    // The same round as if a second lab had read some of it: each finding names its lab and cutoffs.
    const mixed = structuredClone(summaries[1]!);
    mixed.cutoffs.push({
      ...mixed.cutoffs[0]!,
      labId: 'northfield',
      labName: 'Northfield',
      positiveBelow: 36,
      cycleLimit: 40,
    });
    expect(mixedReadings(mixed)).toBe(true);
    const html = renderSummaryPage({ summary: mixed, alerts, notices: [] });
    expect(row(html, 'A1')).toContain(`${escapeHtml(OSTERMARK)}: positive below 37, suspect below 40, cycle limit 45`);
  });

  it('lists where the results came from, to file against the lab report', () => {
    const start = summaryHtml.indexOf('<table data-sources="">');
    const table = summaryHtml.slice(start, summaryHtml.indexOf('</table>', start));
    for (const text of [escapeHtml(OSTERMARK), '2026-08-20', 'OA-0817', '2026-08-17 to 2026-08-18'])
      expect(table).toContain(text);
    // The lab's cutoffs, beside the defaults of assays.yaml (PRRSV 36 / 40 / 40).
    expect(summaryHtml).toContain(
      `${escapeHtml(OSTERMARK)}: PRRSV positive below 37, suspect below 40, cycle limit 45`,
    );
    expect(summaryHtml).toContain('assays.yaml default 36, 40, 40');
  });

  it('keeps every caution', () => {
    for (const caution of CAUTIONS) expect(summaryHtml).toContain(escapeHtml(caution));
    for (const caution of CAUTIONS) expect(clustersHtml).toContain(escapeHtml(caution));
  });

  it('writes runs of consecutive case numbers as first to last', () => {
    // By hand: 1000..1003 is one run; 1005 stands alone; two in a row stay listed.
    expect(caseList(['NV26-01001', 'NV26-01000', 'NV26-01003', 'NV26-01002', 'NV26-01005'])).toBe(
      'NV26-01000 to NV26-01003, NV26-01005',
    );
    expect(caseList(['A-7', 'A-8', 'B'])).toBe('A-7, A-8, B');
  });
});

describe('the cluster review draws each result with its own lab cutoffs', () => {
  const f1 = clustersHtml.slice(clustersHtml.indexOf('<section class="barn" data-barn="F1">'));
  const section = f1.slice(0, f1.indexOf('</section>'));

  it('labels the shade of Ct 31.0 from a 45-cycle lab as Ct 30-35, not 25-30', () => {
    // Load score L = C_max - Ct (common practice, no source) with the lab's C_max = 45: L = 14, step ceil(14 / 5) = 3,
    // which covers Ct [45 - 15, 45 - 10) = [30, 35). With the assay default of 40 the same step reads 25-30.
    const step = loadStep(45 - 31);
    expect(step).toBe(3);
    const pen = section.slice(section.indexOf('data-pen="A1"'));
    expect(pen.slice(0, pen.indexOf('</g>'))).toContain(`fill="${LOAD_RAMP[step]!.fill}"`);
    const legend = section.slice(section.indexOf('data-legend=""'));
    const item = legend.slice(legend.indexOf(`fill="${LOAD_RAMP[step]!.fill}"`));
    const label = item.slice(item.indexOf('</svg>') + 6, item.indexOf('</span>'));
    expect(label).toContain('30\u201335 (limit 45)');
    expect(legend.slice(0, legend.indexOf('</div>'))).toContain(`45 (${escapeHtml(OSTERMARK)})`);
  });

  it('names the lab and cutoffs of a pen reading in its map tooltip', () => {
    expect(section).toContain(`Ct 31 (${escapeHtml(OSTERMARK)}: positive below 37, cycle limit 45)`);
  });

  it('draws the positive cutoff of the lab that reported the Ct, with its value', () => {
    // A1's only Ct is ostermark's: one dashed line at 37, none at the assay default 36.
    expect(trend('A1')).toContain('data-cutoff="37"');
    expect(trend('A1')).not.toContain('data-cutoff="36"');
    // A3 has a northfield Ct (cutoff 36) and an ostermark Ct (cutoff 37).
    expect(trend('A3')).toContain('data-cutoff="36"');
    expect(trend('A3')).toContain('data-cutoff="37"');
    expect(section).toContain(
      `the lab\u2019s positive cutoff, 36 (Northfield Veterinary Diagnostic Laboratory (invented)); 37 (${escapeHtml(OSTERMARK)})`,
    );
  });

  it('draws an invalid result as its own mark, never on the not-detected line, with a legend entry', () => {
    expect(trend('A1')).toContain('data-point="invalid"');
    expect(trend('A1')).not.toContain('data-point="nd"');
    expect(section).toContain('data-trend-legend=""');
    expect(section).toContain('invalid (retest)');
  });

  it('lists the sequencing candidates with a plain reading that names its basis', () => {
    const start = clustersHtml.indexOf('data-sequencing="PRRSV"');
    expect(start).toBeGreaterThan(-1);
    const block = clustersHtml.slice(start, clustersHtml.indexOf('</p>', start));
    expect(block).toContain('F1: A1 (31.0)');
    expect(block).not.toContain('A3');
    expect(block).toContain(
      'Ct below 32: enough viral RNA that sequencing is likely to succeed (common practice, no published source)',
    );
  });

  it('names on the page the lab and cutoffs the round was read with', () => {
    expect(clustersHtml).toContain(
      `Cutoffs of the reporting lab: <span data-read-with="">${escapeHtml(OSTERMARK)}: PRRSV positive below 37; suspect below 40, cycle limit 45</span>`,
    );
  });
});
