/**
 * Helpers for the page tests: run the demo into a temp folder and write its pages (so the tests
 * work whether or not the pipeline already calls writeSitePages), and launch Debian's headless
 * Chromium through playwright-core.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { CliIo } from '../../src/cli/io.js';
import { runDemo } from '../../src/demo/runDemo.js';
import { DEMO_TODAY } from '../../src/demo/scenario.js';
import { analyseSite, type SiteAnalysis } from '../../src/outputs.js';
import { OutbreakCache } from '../../src/analysis/spatialRound.js';
import { writeIndex, writeSitePages } from '../../src/report/pages.js';
import { openWorkspace, type WorkspacePaths } from '../../src/workspace.js';

export const CHROMIUM = '/usr/bin/chromium';

export const CHROMIUM_ARGS = ['--headless', '--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

export interface DemoPages {
  root: string;
  paths: WorkspacePaths;
  analyses: SiteAnalysis[];
  cleanup: () => void;
}

function collectingIo(root: string): CliIo {
  return { stdout: () => {}, stderr: () => {}, cwd: root, now: () => new Date(DEMO_TODAY), env: {} };
}

/**
 * Runs the demo into a fresh temp folder, then re-analyses every site from the demo store with
 * `configDir` (default: the demo's own config; pass a modified copy to test e.g. notifiable
 * assays) and writes the pages and the index into `outbox`.
 */
export async function buildDemoPages(options: { editConfig?: (configDir: string) => void } = {}): Promise<DemoPages> {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-pages-'));
  const paths: WorkspacePaths = {
    configDir: path.join(root, 'config'),
    dbFile: path.join(root, 'data', 'ropewatch.db'),
    inbox: path.join(root, 'inbox'),
    outbox: path.join(root, 'outbox'),
  };
  await runDemo(collectingIo(root), paths, false);
  options.editConfig?.(paths.configDir);
  const ws = openWorkspace(paths, () => new Date(DEMO_TODAY), () => {});
  const analyses: SiteAnalysis[] = [];
  try {
    const results = ws.store.currentResults();
    const cache = new OutbreakCache(ws.config.analysis);
    for (const site of ws.config.sites) {
      const analysis = analyseSite(ws, site, results, cache);
      writeSitePages(ws.outbox, ws.config, analysis);
      analyses.push(analysis);
    }
    writeIndex(ws.outbox, ws.config);
  } finally {
    ws.close();
  }
  return { root, paths, analyses, cleanup: () => fs.rmSync(root, { recursive: true, force: true }) };
}
