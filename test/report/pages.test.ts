import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { CAUTIONS, notifiableNotice } from '../../src/report/cautions.js';
import { escapeHtml } from '../../src/report/html/escape.js';
import { alertsOfRounds, roundAlerts } from '../../src/report/html/alerts.js';
import { renderClustersPage } from '../../src/report/html/clustersPage.js';
import { writeIndex, writeSitePages, type SiteDigest } from '../../src/report/pages.js';
import { buildDemoPages, type DemoPages } from '../helpers/browser.js';

/** Every .html file under dir, relative paths. */
function htmlFiles(dir: string, rel = ''): string[] {
  return fs.readdirSync(path.join(dir, rel), { withFileTypes: true }).flatMap((entry) => {
    const child = rel === '' ? entry.name : `${rel}/${entry.name}`;
    if (entry.isDirectory()) return htmlFiles(dir, child);
    return entry.name.endsWith('.html') ? [child] : [];
  });
}

let demo: DemoPages;
const PRRSV_NAME = 'PRRSV RT-PCR';
const IAV_NAME = 'Influenza A virus RT-PCR (matrix gene)';

beforeAll(async () => {
  // The demo scenario, re-analysed with a copy of its config in which PRRSV is notifiable.
  demo = await buildDemoPages({
    editConfig: (dir) => {
      const file = path.join(dir, 'assays.yaml');
      const text = fs.readFileSync(file, 'utf8');
      const edited = text.replace(/(id: PRRSV[\s\S]*?notifiable: )false/, '$1true');
      expect(edited).not.toBe(text);
      fs.writeFileSync(file, edited);
    },
  });
});

afterAll(() => demo?.cleanup());

describe('the pages of the demo', () => {
  it('writes a summary and a cluster review per round, a rope sheet and a digest per site, and the index', () => {
    const outbox = demo.paths.outbox;
    for (const analysis of demo.analyses) {
      for (const summary of analysis.summaries) {
        for (const page of ['summary.html', 'clusters.html'])
          expect(
            fs.existsSync(path.join(outbox, analysis.site.id, summary.round.id, page)),
            `${summary.round.id}/${page}`,
          ).toBe(true);
      }
      expect(fs.existsSync(path.join(outbox, analysis.site.id, 'next-round.html'))).toBe(true);
      expect(fs.existsSync(path.join(outbox, analysis.site.id, 'plan.html'))).toBe(true);
      expect(fs.existsSync(path.join(outbox, analysis.site.id, 'site.json'))).toBe(true);
    }
    expect(fs.existsSync(path.join(outbox, 'index.html'))).toBe(true);
  });

  it('carries every caution on every page', () => {
    const files = htmlFiles(demo.paths.outbox);
    expect(files.length).toBeGreaterThanOrEqual(2 * 11 + 2 + 1);
    for (const file of files) {
      const html = fs.readFileSync(path.join(demo.paths.outbox, file), 'utf8');
      for (const caution of CAUTIONS) expect(html, `${file}: ${caution}`).toContain(escapeHtml(caution));
    }
  });

  it('puts the notifiable notice on every page that shows a notifiable assay, and only for that assay', () => {
    for (const file of htmlFiles(demo.paths.outbox)) {
      const html = fs.readFileSync(path.join(demo.paths.outbox, file), 'utf8');
      // Every demo round tests PRRSV, so every page shows it.
      expect(html, file).toContain(
        `<div class="notice" role="alert" data-notifiable="">${escapeHtml(notifiableNotice(PRRSV_NAME))}</div>`,
      );
      expect(html, file).not.toContain(escapeHtml(notifiableNotice(IAV_NAME)));
    }
  });

  it('shows no notifiable notice when no assay is notifiable', () => {
    const analysis = demo.analyses[0]!;
    const config = loadConfig(DEMO_CONFIG_DIR);
    const outbox = fs.mkdtempSync(path.join(demo.root, 'plain-'));
    writeSitePages(outbox, config, analysis);
    for (const file of htmlFiles(outbox))
      expect(fs.readFileSync(path.join(outbox, file), 'utf8'), file).not.toContain('data-notifiable');
  });

  it('writes the same bytes when the same analysis is written again', () => {
    const analysis = demo.analyses[0]!;
    const config = loadConfig(demo.paths.configDir);
    const dir = path.join(demo.paths.outbox, analysis.site.id);
    const before = htmlFiles(dir).map((file) => fs.readFileSync(path.join(dir, file), 'utf8'));
    writeSitePages(demo.paths.outbox, config, analysis);
    const after = htmlFiles(dir).map((file) => fs.readFileSync(path.join(dir, file), 'utf8'));
    expect(after).toEqual(before);
  });

  it('draws a cluster review the same whether the pages of the rounds before it were drawn first or not', () => {
    const config = loadConfig(demo.paths.configDir);
    const page = (analysis: (typeof demo.analyses)[number], index: number) =>
      renderClustersPage({
        site: analysis.site,
        summaries: analysis.summaries,
        spatial: analysis.spatial,
        index,
        assays: config.assayById,
        alpha: config.analysis.alpha,
        alerts: alertsOfRounds(analysis)[index]!,
        notices: [],
      });
    const minis: number[] = [];
    for (const original of demo.analyses) {
      const last = original.summaries.length - 1;
      // Fresh copies: no map of theirs has been drawn yet.
      const alone = page(structuredClone(original), last);
      const inOrder = structuredClone(original);
      const pages = inOrder.summaries.map((_, index) => page(inOrder, index));
      expect(pages[last]).toBe(alone);
      minis.push(alone.split('data-map="mini"').length - 1);
    }
    // The earlier rounds drawn small again on the last page of a site with a positive barn.
    expect(Math.max(...minis)).toBeGreaterThan(0);
  });

  it('keeps sites in the index whose pages were not regenerated', () => {
    const config = loadConfig(demo.paths.configDir);
    const other = JSON.parse(
      fs.readFileSync(path.join(demo.paths.outbox, 'tamsin-ridge', 'site.json'), 'utf8'),
    ) as SiteDigest;
    const extra = path.join(demo.paths.outbox, 'zz-other');
    fs.mkdirSync(extra);
    fs.writeFileSync(
      path.join(extra, 'site.json'),
      JSON.stringify({ ...other, site: { id: 'zz-other', name: 'Other <&> Site' } }),
    );
    writeIndex(demo.paths.outbox, config);
    const html = fs.readFileSync(path.join(demo.paths.outbox, 'index.html'), 'utf8');
    expect(html).toContain('Other &lt;&amp;&gt; Site');
    // Config order first, then the unknown site.
    expect(html.indexOf('data-site="hollow-creek"')).toBeLessThan(html.indexOf('data-site="tamsin-ridge"'));
    expect(html.indexOf('data-site="tamsin-ridge"')).toBeLessThan(html.indexOf('data-site="zz-other"'));
    fs.rmSync(extra, { recursive: true });
    writeIndex(demo.paths.outbox, config);
  });
});

describe('roundAlerts on the demo scenario', () => {
  // Expected alerts follow the scenario's own summary.json counts, checked by reading those files:
  // Hollow Creek r04 has the first PRRSV positive (F1), a suspect in F3 and a rope missing in F2;
  // r07 has spread in F1; Tamsin Ridge r02 has an invalid PRRSV result in N2, and r04
  // started 42 days after r03 with a 21-day interval.
  const kinds = (siteIndex: number, round: number) => {
    const analysis = demo.analyses[siteIndex]!;
    const index = analysis.summaries.findIndex((summary) => summary.round.number === round);
    return roundAlerts(analysis.summaries, analysis.spatial, index).map(
      (alert) => `${alert.kind}:${alert.barnId ?? '-'}`,
    );
  };

  it('names the first positive on a site, a suspect and a missing rope', () => {
    const alerts = kinds(0, 4);
    expect(alerts).toContain('first-positive:F1');
    expect(alerts).toContain('suspect:F3');
    expect(alerts).toContain('missing-ropes:F2');
    expect(alerts).toContain('freedom-reset:-');
  });

  it('reports the spread in the last Hollow Creek round', () => {
    // F1 is positive from r04 on and monitored: its ropes follow the positive pens (re-roped,
    // ring, fixed tracking set), so r05 to r07 show spread, not a cluster against negative pens.
    expect(kinds(0, 7)).toContain('spread:F1');
    expect(kinds(0, 7)).not.toContain('first-positive:-');
  });

  it('opens the positive alert of the last Hollow Creek round with what to do', () => {
    expect(kinds(0, 7)).toContain('positive-again:F1');
    expect(kinds(0, 7)).not.toContain('first-positive:F1');
    const analysis = demo.analyses[0]!;
    const index = analysis.summaries.findIndex((summary) => summary.round.number === 7);
    const f1 = roundAlerts(analysis.summaries, analysis.spatial, index).find(
      (alert) => alert.kind === 'positive-again',
    )!;
    const tally = analysis.summaries[index]!.barns.find((barn) => barn.barnId === 'F1')!.assays.find(
      (assay) => assay.assayId === 'PRRSV',
    )!;
    // The action names the barn, the count and the place; the statistic and its p-value follow on the detail line.
    expect(f1.action).toMatch(
      new RegExp(
        `^Positive .+ in Finisher 1 again: ${tally.positive} pens, (clustered around \\w+\u2013\\w+|scattered through the barn); tell the herd veterinarian today`,
      ),
    );
    expect(f1.numbers.positive).toBe(tally.positive);
  });

  it('says the freedom reset in the round that lost it, not in every positive round after', () => {
    const analysis = demo.analyses[0]!;
    const resets = analysis.summaries.map(
      (_, index) =>
        roundAlerts(analysis.summaries, analysis.spatial, index).filter(
          (alert) => alert.kind === 'freedom-reset' && alert.assayId === 'PRRSV',
        ).length,
    );
    const positiveRounds = analysis.summaries.map(
      (summary) => summary.assays.find((assay) => assay.id === 'PRRSV')?.site.freedomReset ?? false,
    );
    // Each run of consecutive positive rounds is told once, at its start.
    const starts = positiveRounds.map((reset, index) => (reset && !(positiveRounds[index - 1] ?? false) ? 1 : 0));
    expect(resets).toEqual(starts);
    expect(positiveRounds.filter(Boolean).length).toBeGreaterThan(starts.reduce((a: number, b) => a + b, 0));
  });

  it('asks for a retest of an invalid result and flags a late round', () => {
    expect(kinds(1, 2)).toContain('invalid:N2');
    expect(kinds(1, 4)).toContain('late-round:-');
    expect(kinds(1, 3)).toEqual([]);
  });

  it('refuses a round index outside the summaries', () => {
    const analysis = demo.analyses[0]!;
    expect(() => roundAlerts(analysis.summaries, analysis.spatial, 99)).toThrow(
      `\`index\` must be an integer in [0, ${analysis.summaries.length - 1}], got 99`,
    );
  });
});
