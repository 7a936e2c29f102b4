/**
 * The maps and the summary page measured in the packaged headless Chromium
 * (@sparticuz/chromium through test/helpers/browser.ts): row labels lie inside the drawing,
 * barns of three and four rows draw their alleys, cluster labels keep clear of the alley labels,
 * the shaded cells of the summary reach the WCAG 2.1 contrast ratio for text, and every page
 * kind (index, summary, cluster review, rope sheet, plan) shows the cautions. A screenshot of
 * each page kind and of the measured maps goes to test-artifacts/screenshots/clinic/.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BarnLayout } from '../../src/domain/layout.js';
import { CAUTIONS } from '../../src/report/cautions.js';
import { renderBarnMap, type PenMark } from '../../src/report/html/barnMap.js';
import { contrastRatio } from '../../src/report/html/palette.js';
import { renderPage } from '../../src/report/html/page.js';
import { buildDemoPages, launchChromium, type DemoPages } from '../helpers/browser.js';
import { twoRowLayout } from '../helpers/layouts.js';

const SHOTS = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../test-artifacts/screenshots/clinic');

type Box = { x: number; y: number; width: number; height: number };
const intersects = (a: Box, b: Box) =>
  a.x < b.x + b.width && b.x < a.x + a.width && a.y < b.y + b.height && b.y < a.y + a.height;

/** A barn of `rows` rows with long row labels, pens 1 x 1, alley 0.6 pen units. */
const wideBarn = (rows: number, labels: string[], overrides: Partial<BarnLayout> = {}) => ({
  id: `R${rows}`,
  name: `${rows} rows`,
  layout: twoRowLayout({ rows, rowLabels: labels, pensPerRow: 8, alleyWidth: 0.6, ...overrides }),
});

describe('maps and pages in the packaged Chromium', () => {
  let context: BrowserContext;
  let userDataDir: string;
  let demo: DemoPages;

  beforeAll(async () => {
    demo = await buildDemoPages();
    userDataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-clinic-'));
    ({ context } = await launchChromium(userDataDir, {
      viewport: { width: 1100, height: 900 },
      env: { ...process.env, ROPEWATCH_CHROMIUM: 'bundled' },
    }));
    fs.mkdirSync(SHOTS, { recursive: true });
  }, 180_000);

  afterAll(async () => {
    await context?.close();
    if (userDataDir) fs.rmSync(userDataDir, { recursive: true, force: true });
    demo?.cleanup();
  });

  async function show(svg: string, name: string): Promise<Page> {
    const page = await context.newPage();
    // In the pages' own shell, so that the text has the pages' fonts.
    await page.setContent(renderPage({ title: name, heading: name, notices: [], body: svg }));
    await page.screenshot({ path: path.join(SHOTS, `${name}.png`) });
    return page;
  }

  /** Bounding boxes in the SVG's own user units (getBBox), with the viewBox they must fit in. */
  async function boxes(page: Page, selector: string): Promise<{ view: Box; items: (Box & { text: string })[] }> {
    return page.evaluate((sel) => {
      const svg = document.querySelector('svg')!;
      const vb = svg.viewBox.baseVal;
      const items = [...svg.querySelectorAll(sel)].map((node) => {
        const b = (node as SVGGraphicsElement).getBBox();
        return { x: b.x, y: b.y, width: b.width, height: b.height, text: node.textContent ?? '' };
      });
      return { view: { x: vb.x, y: vb.y, width: vb.width, height: vb.height }, items };
    }, selector);
  }

  it('keeps multi-letter row labels whole inside the drawing', async () => {
    for (const [rows, labels] of [
      [2, ['West', 'East']],
      [3, ['West', 'Middle', 'East']],
      [4, ['North', 'Middle', 'WWMM', 'South']],
    ] as const) {
      const page = await show(
        renderBarnMap(wideBarn(rows, [...labels]), { key: `l${rows}`, scale: 34, detail: 'full', title: 'labels' }),
        `row-labels-${rows}`,
      );
      const { view, items } = await boxes(page, 'text.row-label');
      expect(items.map((item) => item.text)).toEqual([...labels]);
      for (const item of items) {
        // Inside the viewBox, and clear of the first pen column (which starts at the left margin).
        expect(item.x, `${item.text} left edge`).toBeGreaterThanOrEqual(view.x);
        expect(item.x + item.width, `${item.text} right edge`).toBeLessThanOrEqual(view.x + view.width);
      }
      const firstPen = await page.evaluate(() =>
        Math.min(
          ...[...document.querySelectorAll('g.pen rect')].map((node) => (node as SVGGraphicsElement).getBBox().x),
        ),
      );
      for (const item of items)
        expect(item.x + item.width, `${item.text} against the pens`).toBeLessThanOrEqual(firstPen);
      await page.close();
    }
  });

  it('draws the alleys of three- and four-row barns, between the rows that face each other', async () => {
    // layout.ts: rows 0|1 face across alley 1, rows 2|3 across alley 2; rows 1 and 2 are back to back.
    for (const [rows, alleys] of [
      [3, 1],
      [4, 2],
    ] as const) {
      const barn = wideBarn(rows, ['A', 'B', 'C', 'D'].slice(0, rows));
      const page = await show(
        renderBarnMap(barn, { key: `a${rows}`, scale: 34, detail: 'full', title: 'alleys' }),
        `alleys-${rows}`,
      );
      const bands = await boxes(page, 'rect[data-alley]');
      expect(bands.items, `${rows} rows`).toHaveLength(alleys);
      expect((await boxes(page, 'text.alley-label')).items).toHaveLength(alleys);
      const rowTop = await page.evaluate(() => {
        const tops = new Map<string, number>();
        for (const node of document.querySelectorAll('g.pen')) {
          const label = node.getAttribute('data-pen')!.replace(/\d+$/, '');
          const y = (node.querySelector('rect') as SVGGraphicsElement).getBBox().y;
          tops.set(label, Math.min(tops.get(label) ?? Infinity, y));
        }
        return Object.fromEntries(tops);
      });
      const penHeight = 34;
      bands.items.forEach((band, k) => {
        const above = ['A', 'C'][k]!;
        const below = ['B', 'D'][k]!;
        // The alley starts where the row above ends and ends where the row below starts.
        expect(band.y).toBeCloseTo(rowTop[above]! + penHeight, 1);
        expect(band.y + band.height).toBeCloseTo(rowTop[below]!, 1);
      });
      await page.close();
    }
  });

  it('keeps cluster labels clear of the alley label', async () => {
    // A cluster starting in row B at position 1 puts its label in the alley, at its left end:
    // where the alley label would go.
    const results = new Map<string, PenMark>([
      ['B1', { resultClass: 'positive', load: 12 }],
      ['B2', { resultClass: 'positive', load: 12 }],
      ['C1', { resultClass: 'positive', load: 12 }],
      ['D1', { resultClass: 'positive', load: 12 }],
      ['D2', { resultClass: 'positive', load: 12 }],
    ]);
    const barn = wideBarn(4, ['A', 'B', 'C', 'D']);
    const clusters = [
      { index: 1, pens: ['B1', 'B2'] },
      { index: 2, pens: ['D1', 'D2'] },
    ];
    const page = await show(
      renderBarnMap(barn, { key: 'c', scale: 34, detail: 'full', title: 'clusters', results, clusters }),
      'cluster-labels',
    );
    const labels = (await boxes(page, 'text.cluster-label')).items;
    const alleys = (await boxes(page, 'text.alley-label')).items;
    expect(labels).toHaveLength(2);
    expect(alleys).toHaveLength(2);
    for (const label of labels)
      for (const alley of alleys)
        expect(intersects(label, alley), `${label.text} against alley label at x ${alley.x}`).toBe(false);
    await page.close();
  });

  it('gives the shaded cells and the alerts of the summary a contrast ratio of at least 4.5', async () => {
    const analysis = demo.analyses[0]!;
    const page = await context.newPage();
    const toHex = (rgb: string) => {
      const [r, g, b] = rgb.match(/\d+/g)!.map(Number);
      return `#${[r, g, b].map((value) => value!.toString(16).padStart(2, '0')).join('')}`;
    };
    let measured = 0;
    for (const summary of analysis.summaries) {
      await page.goto(
        pathToFileURL(path.join(demo.paths.outbox, analysis.site.id, summary.round.id, 'summary.html')).href,
      );
      const pairs = await page.evaluate(() =>
        [
          ...document.querySelectorAll('td.below, td.met, span.below, span.met, .alerts li strong, .alerts li .detail'),
        ].map((node) => {
          const style = getComputedStyle(node);
          let back = style.backgroundColor;
          for (let el: Element | null = node; el && /rgba\(0, 0, 0, 0\)|transparent/.test(back); el = el.parentElement)
            back = getComputedStyle(el).backgroundColor;
          return { text: node.textContent ?? '', ink: style.color, paper: back };
        }),
      );
      for (const pair of pairs) {
        // WCAG 2.1 SC 1.4.3 (contrast minimum): 4.5:1 for normal text.
        expect(
          contrastRatio(toHex(pair.ink), toHex(pair.paper)),
          `${summary.round.id} "${pair.text.slice(0, 40)}" ${pair.ink} on ${pair.paper}`,
        ).toBeGreaterThanOrEqual(4.5);
        measured++;
      }
    }
    expect(measured).toBeGreaterThan(0);
    await page.close();
  }, 60_000);

  it('shows the cautions on every page kind, and screenshots one of each', async () => {
    const site = demo.analyses[0]!;
    const round = site.summaries.at(-1)!.round.id;
    const kinds = {
      index: 'index.html',
      summary: `${site.site.id}/${round}/summary.html`,
      clusters: `${site.site.id}/${round}/clusters.html`,
      'rope-sheet': `${site.site.id}/next-round.html`,
      plan: `${site.site.id}/plan.html`,
    };
    const page = await context.newPage();
    for (const [kind, relative] of Object.entries(kinds)) {
      await page.goto(pathToFileURL(path.join(demo.paths.outbox, relative)).href);
      const shown = await page
        .locator('[data-cautions] li')
        .evaluateAll((nodes) => nodes.map((node) => node.textContent));
      expect(shown, kind).toEqual([...CAUTIONS]);
      // Visible: laid out with a size, not hidden.
      expect(await page.locator('[data-cautions]').isVisible(), kind).toBe(true);
      await page.screenshot({ path: path.join(SHOTS, `${kind}.png`), fullPage: true });
    }
    // A page with nothing else still carries them (the shell adds them, not each page).
    await page.setContent(renderPage({ title: 't', heading: 'h', notices: [], body: '' }));
    expect(await page.locator('[data-cautions] li').count()).toBe(CAUTIONS.length);
    await page.close();
  }, 60_000);
});
