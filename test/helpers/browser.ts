/**
 * Helpers for the page tests: run the demo into a temp folder, rewrite its outputs (after an
 * optional config edit), and launch Debian's headless Chromium through playwright-core.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type { CliIo } from '../../src/cli/io.js';
import { runDemo } from '../../src/demo/runDemo.js';
import { DEMO_TODAY } from '../../src/demo/scenario.js';
import { regenerateOutputs, type SiteAnalysis } from '../../src/outputs.js';
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
  let analyses: SiteAnalysis[];
  try {
    // The same call a drop triggers: every site's outputs, pages and the index.
    analyses = regenerateOutputs(ws);
  } finally {
    ws.close();
  }
  return { root, paths, analyses, cleanup: () => fs.rmSync(root, { recursive: true, force: true }) };
}
