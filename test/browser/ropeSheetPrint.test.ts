/**
 * The rope sheet and its tube labels on paper: headless Chromium prints the demo's pages to PDF
 * on A4 and US Letter, and the test reads back which page each part landed on. Before printing,
 * the test puts a tiny link into each part it follows (barn heading, map, checklist line, the
 * checklist head that repeats on every page, each caution, the instructions); Chromium writes a
 * link annotation with that address on the page where the part is painted (ISO 32000-1 section
 * 12.5.6.5, link annotations; a page's /Annots array), so the page of every part is known
 * without reading the page's text. PDFs and screenshots go to test-artifacts/.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { BrowserContext, Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { A4_24, LABEL_LAYOUTS, LETTER_30 } from '../../src/report/html/labelSheetPage.js';
import { buildDemoPages, chooseChromium, isExecutable, launchChromium, type DemoPages } from '../helpers/browser.js';

const ARTIFACTS = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../test-artifacts');
const choice = chooseChromium(process.env, isExecutable);

/** The marker links, added in the page (a script string: the test runner's helpers do not exist there). */
const MARK = `(() => {
  let n = 0;
  const mark = (el, kind, barn) => {
    const a = document.createElement('a');
    a.href = 'https://marker.invalid/' + kind + '/' + encodeURIComponent(barn || '-') + '/' + (n++);
    a.textContent = '\\u200b';
    a.style.cssText = 'display:inline-block;width:2px;height:2px;overflow:hidden';
    el.prepend(a);
  };
  for (const section of document.querySelectorAll('section[data-barn]')) {
    const barn = section.getAttribute('data-barn');
    mark(section.querySelector('h2'), 'heading', barn);
    const figure = section.querySelector('figure');
    if (figure) mark(figure, 'map', barn);
    for (const cell of section.querySelectorAll('tr[data-rope] td:first-child')) mark(cell, 'row', barn);
    const head = section.querySelector('[data-barn-head]');
    if (head) mark(head, 'head', barn);
  }
  for (const item of document.querySelectorAll('[data-cautions] li')) mark(item, 'caution');
  mark(document.querySelector('p.instructions'), 'instructions');
})()`;

interface Marker {
  kind: string;
  barn: string;
}

/** An indirect object's text, up to its endobj (page and annotation objects are dictionaries without streams). */
function pdfObject(pdf: string, id: string): string {
  const start = pdf.indexOf(`\n${id} 0 obj\n`);
  if (start < 0) throw new Error(`object ${id} not found`);
  return pdf.slice(start, pdf.indexOf('endobj', start));
}

/** The pages of a PDF in order (the page tree's /Kids, depth first: ISO 32000-1 section 7.7.3). */
function pageObjects(pdf: string): string[] {
  const root = /\/Root (\d+) 0 R/.exec(pdf)![1]!;
  const pages = /\/Pages (\d+) 0 R/.exec(pdfObject(pdf, root))![1]!;
  const walk = (id: string): string[] => {
    const object = pdfObject(pdf, id);
    if (!/\/Type \/Pages\b/.test(object)) return [object];
    return [.../\/Kids \[([^\]]*)\]/.exec(object)![1]!.matchAll(/(\d+) 0 R/g)].flatMap((kid) => walk(kid[1]!));
  };
  return walk(pages);
}

/** Per page, the markers whose link annotations it holds. */
function markersByPage(pdf: string): Marker[][] {
  return pageObjects(pdf).map((page) => {
    const annots = /\/Annots \[([^\]]*)\]/.exec(page);
    if (!annots) return [];
    return [...annots[1]!.matchAll(/(\d+) 0 R/g)].flatMap((ref) => {
      const uri = /\/URI \(https:\/\/marker\.invalid\/([^/]+)\/([^/]+)\/\d+\)/.exec(pdfObject(pdf, ref[1]!));
      return uri ? [{ kind: uri[1]!, barn: decodeURIComponent(uri[2]!) }] : [];
    });
  });
}

describe(`the rope sheet and its labels printed by headless Chromium (${choice.kind})`, () => {
  let demo: DemoPages;
  let context: BrowserContext;
  let userDataDir: string;

  beforeAll(async () => {
    demo = await buildDemoPages();
    userDataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-print-'));
    ({ context } = await launchChromium(userDataDir, { viewport: { width: 1100, height: 900 } }));
    await context.route('**/*', async (route) =>
      route.request().url().startsWith('file:') ? route.continue() : route.abort(),
    );
    fs.mkdirSync(path.join(ARTIFACTS, 'pdf'), { recursive: true });
    fs.mkdirSync(path.join(ARTIFACTS, 'screenshots'), { recursive: true });
  }, 120_000);

  afterAll(async () => {
    await context?.close();
    if (userDataDir) fs.rmSync(userDataDir, { recursive: true, force: true });
    demo?.cleanup();
  });

  async function open(relative: string): Promise<Page> {
    const page = await context.newPage();
    await page.goto(pathToFileURL(path.join(demo.paths.outbox, relative)).href, { waitUntil: 'load' });
    await page.emulateMedia({ media: 'print' });
    return page;
  }

  for (const format of ['A4', 'Letter'] as const) {
    it(`prints each barn of the rope sheet on ${format} with its heading, map and first checklist lines on one page, a page per barn, the head repeated, no page of cautions alone`, async () => {
      for (const analysis of demo.analyses) {
        const site = analysis.site.id;
        const page = await open(`${site}/next-round.html`);
        // Each checklist line carries the barcode of its own sample ID, within its cell.
        const lines = await page.locator('tr[data-rope]').evaluateAll((rows) =>
          rows.map((row) => {
            const svg = row.querySelector('td.sample svg.barcode');
            const cell = row.querySelector('td.sample')!.getBoundingClientRect();
            const box = svg?.getBoundingClientRect();
            return {
              id: row.getAttribute('data-rope'),
              code: svg?.getAttribute('data-code128') ?? null,
              inside: !!box && box.left >= cell.left && box.right <= cell.right,
            };
          }),
        );
        expect(
          lines.map((line) => line.code),
          `${site}: a barcode per line`,
        ).toEqual(analysis.plan.ropes.map((rope) => rope.sampleId));
        expect(
          lines.every((line) => line.inside),
          `${site}: barcodes inside their cells`,
        ).toBe(true);
        // Every sequence number below the highest that no rope carries is named on the sheet.
        const sequences = new Set(analysis.plan.ropes.map((rope) => Number(/-(\d{3})/.exec(rope.sampleId)![1])));
        const missing = Array.from({ length: Math.max(...sequences) }, (_, i) => i + 1).filter(
          (n) => !sequences.has(n),
        );
        const skippedText = missing.length > 0 ? await page.locator('[data-skipped]').textContent() : '';
        for (const n of missing)
          expect(skippedText, `${site}: skipped ${n} named`).toContain(String(n).padStart(3, '0'));
        await page.evaluate(MARK);
        const pdf = await page.pdf({ format, printBackground: true });
        fs.writeFileSync(path.join(ARTIFACTS, 'pdf', `${site}__next-round__${format}.pdf`), pdf);
        await page.close();
        const text = pdf.toString('latin1');
        const pages = markersByPage(text);
        expect(pages.length, `${site} ${format}: pages in the tree = page objects`).toBe(
          (text.match(/\/Type\s*\/Page[^s]/g) ?? []).length,
        );
        const pagesOf = (kind: string, barn = '-') =>
          pages.flatMap((markers, index) => (markers.some((m) => m.kind === kind && m.barn === barn) ? [index] : []));
        const barns = analysis.site.barns.filter((barn) => analysis.plan.ropes.some((rope) => rope.barnId === barn.id));
        let previousLast = -1;
        for (const barn of barns) {
          const label = `${site} ${format} ${barn.id}`;
          const rows = pages.flatMap((markers, index) =>
            markers.filter((m) => m.kind === 'row' && m.barn === barn.id).map(() => index),
          );
          expect(rows, `${label}: every checklist line printed once`).toHaveLength(
            analysis.plan.ropes.filter((rope) => rope.barnId === barn.id).length,
          );
          const [heading] = pagesOf('heading', barn.id);
          // The barn's heading, its map and its first checklist line share a page.
          expect(pagesOf('heading', barn.id), `${label}: heading`).toHaveLength(1);
          expect(pagesOf('map', barn.id), `${label}: map on the heading's page`).toEqual([heading]);
          expect(rows[0], `${label}: first line on the heading's page`).toBe(heading);
          // Page breaks between barns: a barn starts on a page after the last line of the one before.
          expect(heading!, `${label}: starts on a page of its own`).toBeGreaterThan(previousLast);
          // Every page that carries lines of the barn names the barn: its heading or the repeated checklist head.
          for (const index of new Set(rows))
            expect(pagesOf('head', barn.id), `${label}: named on page ${index + 1}`).toContain(index);
          previousLast = rows.at(-1)!;
        }
        // The cautions are printed, all of them, and never on a page by themselves.
        expect(
          pages.flat().filter((m) => m.kind === 'caution'),
          `${site} ${format}: cautions`,
        ).toHaveLength(4);
        pages.forEach((markers, index) => {
          expect(
            markers.some((m) => m.kind !== 'caution'),
            `${site} ${format}: page ${index + 1} holds more than cautions`,
          ).toBe(true);
        });
        // The demo's barns each fit on at most two pages.
        expect(pages.length, `${site} ${format}: pages`).toBeLessThanOrEqual(2 * barns.length);
      }
    }, 120_000);
  }

  for (const layout of LABEL_LAYOUTS) {
    it(`places the tube labels of ${layout.file} at the positions of its label sheet and prints a sheet per ${layout.columns * layout.rows} labels`, async () => {
      // CSS px: 96 per inch, an inch is 25.4 mm (CSS Values and Units Level 3, section 5.2).
      const px = (value: number) => (layout.unit === 'in' ? value * 96 : (value * 96) / 25.4);
      for (const analysis of demo.analyses) {
        const site = analysis.site.id;
        const page = await open(`${site}/${layout.file}`);
        await page.screenshot({
          path: path.join(ARTIFACTS, 'screenshots', `${site}__${layout.file.replace(/\.html$/, '')}__print.png`),
          fullPage: true,
        });
        const boxes = await page.locator('[data-label]').evaluateAll((nodes) =>
          nodes.map((node) => {
            const box = node.getBoundingClientRect();
            const sheet = node.parentElement!.getBoundingClientRect();
            const svg = node.querySelector('svg.barcode');
            return {
              id: node.getAttribute('data-label'),
              code: svg?.getAttribute('data-code128') ?? null,
              sheetIndex: [...document.querySelectorAll('.sheet')].indexOf(node.parentElement!),
              left: box.left - sheet.left,
              top: box.top - sheet.top,
              width: box.width,
              height: box.height,
              sheetWidth: sheet.width,
              sheetHeight: sheet.height,
              fits: node.scrollHeight <= node.clientHeight + 0.5 && node.scrollWidth <= node.clientWidth + 0.5,
              barcodeWidth: svg ? svg.getBoundingClientRect().width : 0,
            };
          }),
        );
        expect(
          boxes.map((box) => box.id),
          `${site} ${layout.id}: a label per rope, in walking order`,
        ).toEqual(analysis.plan.ropes.map((rope) => rope.sampleId));
        const perSheet = layout.columns * layout.rows;
        boxes.forEach((box, index) => {
          const label = `${site} ${layout.id} label ${index + 1}`;
          const slot = index % perSheet;
          expect(box.code, label).toBe(box.id);
          expect(box.sheetIndex, label).toBe(Math.floor(index / perSheet));
          expect(Math.abs(box.sheetWidth - px(layout.paperWidth)), `${label} sheet width`).toBeLessThan(1);
          expect(Math.abs(box.sheetHeight - px(layout.paperHeight)), `${label} sheet height`).toBeLessThan(1);
          expect(
            Math.abs(box.left - px(layout.left + (slot % layout.columns) * layout.pitchX)),
            `${label} left`,
          ).toBeLessThan(1);
          expect(
            Math.abs(box.top - px(layout.top + Math.floor(slot / layout.columns) * layout.pitchY)),
            `${label} top`,
          ).toBeLessThan(1);
          expect(Math.abs(box.width - px(layout.labelWidth)), `${label} width`).toBeLessThan(1);
          expect(Math.abs(box.height - px(layout.labelHeight)), `${label} height`).toBeLessThan(1);
          expect(box.fits, `${label}: text and barcode fit inside the label`).toBe(true);
          expect(box.barcodeWidth, `${label}: barcode inside the label`).toBeLessThan(box.width);
        });
        const pdf = await page.pdf({ preferCSSPageSize: true, printBackground: true });
        fs.writeFileSync(path.join(ARTIFACTS, 'pdf', `${site}__${layout.file.replace(/\.html$/, '')}.pdf`), pdf);
        await page.close();
        const text = pdf.toString('latin1');
        const mediaBoxes = pageObjects(text).map((object) =>
          /\/MediaBox \[([^\]]*)\]/.exec(object)![1]!.split(/\s+/).map(Number),
        );
        expect(mediaBoxes, `${site} ${layout.id}: sheets`).toHaveLength(Math.ceil(boxes.length / perSheet));
        // PDF units are 1/72 in (ISO 32000-1 section 8.3.2.3): Letter 612 x 792, A4 about 595.3 x 841.9.
        const points = (value: number) => (layout.unit === 'in' ? value * 72 : (value * 72) / 25.4);
        for (const box of mediaBoxes) {
          expect(
            Math.abs(box[2]! - box[0]! - points(layout.paperWidth)),
            `${site} ${layout.id} paper width`,
          ).toBeLessThan(1.5);
          expect(
            Math.abs(box[3]! - box[1]! - points(layout.paperHeight)),
            `${site} ${layout.id} paper height`,
          ).toBeLessThan(1.5);
        }
      }
    }, 120_000);
  }

  it('uses label templates whose labels, gaps and margins add up to the paper', () => {
    // Letter is 8.5 x 11 in, A4 210 x 297 mm (ISO 216); symmetric margins (common practice, no source).
    for (const layout of [LETTER_30, A4_24]) {
      expect(2 * layout.left + (layout.columns - 1) * layout.pitchX + layout.labelWidth, layout.id).toBeCloseTo(
        layout.paperWidth,
        6,
      );
      expect(2 * layout.top + (layout.rows - 1) * layout.pitchY + layout.labelHeight, layout.id).toBeCloseTo(
        layout.paperHeight,
        6,
      );
    }
    expect([LETTER_30.paperWidth, LETTER_30.paperHeight]).toEqual([8.5, 11]);
    expect([A4_24.paperWidth, A4_24.paperHeight]).toEqual([210, 297]);
  });
});
