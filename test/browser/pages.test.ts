/**
 * The pages in a real browser: headless Chromium (Debian's, or the one the dev dependency
 * @sparticuz/chromium carries; test/helpers/browser.ts) through playwright-core opens every
 * page of the demo from file:// and checks that nothing errs, nothing reaches the network, the
 * maps show the pens and positives the JSON outputs hold, the index links resolve, and writes a
 * screenshot of each page to test-artifacts/screenshots/.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { RoundSummary } from '../../src/analysis/roundSummary.js';
import { buildDemoPages, chooseChromium, isExecutable, launchChromium, type DemoPages } from '../helpers/browser.js';

const SCREENSHOTS = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../test-artifacts/screenshots');
// Never a skip: with no browser at all, launching fails and says why.
const choice = chooseChromium(process.env, isExecutable);

describe(`the pages in headless Chromium (${choice.kind === 'system' ? choice.executablePath : 'bundled with @sparticuz/chromium'})`, () => {
  let demo: DemoPages;
  let context: BrowserContext;
  let userDataDir: string;
  const offsite: string[] = [];
  const errors: string[] = [];

  beforeAll(async () => {
    demo = await buildDemoPages();
    userDataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-chromium-'));
    ({ context } = await launchChromium(userDataDir, { viewport: { width: 1100, height: 900 } }));
    await context.route('**/*', async (route) => {
      const url = route.request().url();
      if (url.startsWith('file:') || url.startsWith('data:')) return route.continue();
      offsite.push(url);
      return route.abort();
    });
    fs.mkdirSync(SCREENSHOTS, { recursive: true });
  }, 120_000);

  afterAll(async () => {
    await context?.close();
    if (userDataDir) fs.rmSync(userDataDir, { recursive: true, force: true });
    demo?.cleanup();
  });

  async function open(relative: string): Promise<Page> {
    const page = await context.newPage();
    page.on('console', (message) => {
      if (message.type() === 'error') errors.push(`${relative}: ${message.text()}`);
    });
    page.on('pageerror', (error) => errors.push(`${relative}: ${error.message}`));
    page.on('request', (request) => {
      const url = request.url();
      if (!url.startsWith('file:') && !url.startsWith('data:')) offsite.push(url);
    });
    page.on('requestfailed', (request) => errors.push(`${relative}: failed ${request.url()}`));
    await page.goto(pathToFileURL(path.join(demo.paths.outbox, relative)).href, { waitUntil: 'load' });
    return page;
  }

  async function shoot(page: Page, relative: string): Promise<void> {
    await page.screenshot({
      path: path.join(SCREENSHOTS, relative.replaceAll('/', '__').replace(/\.html$/, '.png')),
      fullPage: true,
    });
  }

  const readJson = <T>(relative: string): T =>
    JSON.parse(fs.readFileSync(path.join(demo.paths.outbox, relative), 'utf8')) as T;

  it('opens every page without console errors or network requests, and screenshots it', async () => {
    const pages = ['index.html'];
    for (const analysis of demo.analyses) {
      pages.push(`${analysis.site.id}/next-round.html`, `${analysis.site.id}/plan.html`);
      for (const summary of analysis.summaries)
        pages.push(
          `${analysis.site.id}/${summary.round.id}/summary.html`,
          `${analysis.site.id}/${summary.round.id}/clusters.html`,
        );
    }
    for (const relative of pages) {
      const page = await open(relative);
      expect(await page.locator('[data-cautions] li').count(), `${relative} cautions`).toBe(4);
      await shoot(page, relative);
      await page.close();
    }
    expect(errors).toEqual([]);
    expect(offsite).toEqual([]);
  }, 120_000);

  it('draws every pen of the layout and every positive of the summary on the cluster maps', async () => {
    for (const analysis of demo.analyses) {
      for (const round of analysis.summaries) {
        const relative = `${analysis.site.id}/${round.round.id}/clusters.html`;
        // The counts to match come from the JSON outputs the pipeline wrote, not from the renderer.
        const summary = readJson<RoundSummary>(`${analysis.site.id}/${round.round.id}/summary.json`);
        const page = await open(relative);
        for (const barn of analysis.site.barns) {
          for (const assay of summary.assays) {
            const map = page.locator(`svg[data-map="main"][data-barn="${barn.id}"][data-assay="${assay.id}"]`);
            expect(await map.count(), `${relative} ${barn.id} ${assay.id} map`).toBe(1);
            const tally = summary.barns
              .find((entry) => entry.barnId === barn.id)!
              .assays.find((entry) => entry.assayId === assay.id)!;
            expect(await map.locator('[data-pen]').count(), `${relative} ${barn.id} pens`).toBe(
              barn.layout.rowLabels.length * barn.layout.pensPerRow,
            );
            expect(await map.locator('[data-status="empty"]').count(), `${relative} ${barn.id} empty`).toBe(
              barn.layout.empty.length,
            );
            expect(await map.locator('[data-status="out-of-use"]').count(), `${relative} ${barn.id} out of use`).toBe(
              barn.layout.outOfUse.length,
            );
            const positives = await map
              .locator('[data-positive]')
              .evaluateAll((nodes) => nodes.map((node) => node.getAttribute('data-pen')).sort());
            expect(positives, `${relative} ${barn.id} ${assay.id} positives`).toEqual([...tally.positivePens].sort());
          }
        }
        await page.close();
      }
    }
  }, 120_000);

  it('marks on the rope sheet exactly the pens of next-round.json, with one checklist line each', async () => {
    for (const analysis of demo.analyses) {
      const plan = readJson<{ ropes: { barnId: string; penId: string; sampleId: string }[] }>(
        `${analysis.site.id}/next-round.json`,
      );
      const page = await open(`${analysis.site.id}/next-round.html`);
      for (const barn of analysis.site.barns) {
        const planned = await page
          .locator(`svg[data-map="sheet"][data-barn="${barn.id}"] [data-planned]`)
          .evaluateAll((nodes) => nodes.map((node) => node.getAttribute('data-pen')).sort());
        expect(planned, `${analysis.site.id} ${barn.id}`).toEqual(
          plan.ropes
            .filter((rope) => rope.barnId === barn.id)
            .map((rope) => rope.penId)
            .sort(),
        );
      }
      const lines = await page
        .locator('tr[data-rope]')
        .evaluateAll((nodes) => nodes.map((node) => node.getAttribute('data-rope')));
      // Checklist order is the plan's order (its walking order).
      expect(lines).toEqual(plan.ropes.map((rope) => rope.sampleId));
      await page.close();
    }
  }, 60_000);

  it('links from the index and from every page resolve to files that exist', async () => {
    const index = await open('index.html');
    const hrefs = await index
      .locator('a[href]')
      .evaluateAll((nodes) => nodes.map((node) => (node as HTMLAnchorElement).href));
    expect(hrefs.length).toBeGreaterThan(0);
    for (const href of hrefs) {
      expect(href.startsWith('file:'), href).toBe(true);
      expect(fs.existsSync(fileURLToPath(href)), href).toBe(true);
    }
    for (const site of demo.analyses)
      expect(hrefs.some((href) => href.endsWith(`${site.site.id}/next-round.html`))).toBe(true);
    await index.close();
    const latest = demo.analyses[0]!.summaries.at(-1)!;
    for (const relative of [
      `${demo.analyses[0]!.site.id}/${latest.round.id}/summary.html`,
      `${demo.analyses[0]!.site.id}/${latest.round.id}/clusters.html`,
      `${demo.analyses[0]!.site.id}/next-round.html`,
    ]) {
      const page = await open(relative);
      for (const href of await page
        .locator('a[href]')
        .evaluateAll((nodes) => nodes.map((node) => (node as HTMLAnchorElement).href))) {
        expect(fs.existsSync(fileURLToPath(href)), `${relative} -> ${href}`).toBe(true);
      }
      await page.close();
    }
  }, 60_000);

  it('prints the latest round summary and cluster review of every site on at most three A4 sheets, and none of them or the rope sheet wider than the sheet', async () => {
    const latest = demo.analyses.flatMap((site) => {
      const round = site.summaries.at(-1)!.round.id;
      return [
        `${site.site.id}/${round}/summary.html`,
        `${site.site.id}/${round}/clusters.html`,
        `${site.site.id}/next-round.html`,
      ];
    });
    for (const relative of latest) {
      const page = await open(relative);
      await page.emulateMedia({ media: 'print' });
      // A4 is 210 mm wide; at 96 px per inch less 2 x 12 mm margins that leaves about 703 px.
      const width = await page.evaluate(() => document.documentElement.scrollWidth);
      await page.setViewportSize({ width: 703, height: 1000 });
      const printed = await page.evaluate(() => document.documentElement.scrollWidth);
      expect(printed, `${relative} printed width (screen width ${width})`).toBeLessThanOrEqual(703);
      const pdf = await page.pdf({ format: 'A4', printBackground: true });
      const pagesInPdf = (pdf.toString('latin1').match(/\/Type\s*\/Page[^s]/g) ?? []).length;
      // The rope sheet gives each barn a page of its own (test/browser/ropeSheetPrint.test.ts).
      // The demo's last round has a monitored barn with 13 positive pens re-roped: the summary lists
      // each on a line and the review draws a Ct trend for each, so either may take a third sheet.
      if (!relative.endsWith('next-round.html')) expect(pagesInPdf, `${relative} A4 pages`).toBeLessThanOrEqual(3);
      await page.close();
    }
  }, 60_000);
});
