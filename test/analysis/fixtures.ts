/** A small, hand-checkable configuration for analysis tests: one site, one barn of 2 x 18 = 36 pens. */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { loadConfig } from '../../src/config/load.js';
import type { Config } from '../../src/config/types.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { resultInput } from '../helpers/results.js';

export function smallConfig(
  program: Record<string, unknown> = {},
  analysis: Record<string, unknown> = {},
  layout: Record<string, unknown> = { rows: 2, pensPerRow: 18 },
): Config {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-analysis-'));
  fs.mkdirSync(path.join(dir, 'labs'));
  for (const name of ['assays.yaml', 'labs/northfield.yaml'])
    fs.copyFileSync(path.join(DEMO_CONFIG_DIR, name), path.join(dir, name));
  const programDefaults: Record<string, unknown> = {
    designPrevalence: { pens: 1 },
    targetConfidence: 0.95,
    ropeSensitivity: 1,
    ropeSpecificity: 1,
    roundWindowDays: 3,
    intervalDays: 14,
    priorFreedom: 0.5,
    introductionPerInterval: 0.01,
    ...program,
  };
  // The demo assays include an antibody ELISA, which needs a rope sensitivity of its own: the
  // one given applies to it as well here.
  const se = programDefaults.ropeSensitivity;
  if (typeof se === 'number') programDefaults.ropeSensitivity = { default: se, 'PRRSV-AB': se };
  const sites = {
    analysis: { seed: 3, sizingModel: 'hypergeometric', ...analysis },
    programDefaults,
    sites: [{ id: 'test-site', name: 'Test Site', code: 'TST', barns: [{ id: 'B1', layout }] }],
  };
  fs.writeFileSync(path.join(dir, 'sites.yaml'), JSON.stringify(sites));
  return loadConfig(dir);
}

/** n ropes on the first n pens of barn B1, all negative for PRRSV unless `positive` names them. */
export function roundRopes(date: string, n: number, prefix: string, positive: readonly number[] = []) {
  const ropes = Array.from({ length: n }, (_, i) => ({
    sampleId: `${prefix}-${i}`,
    siteId: 'test-site',
    barnId: 'B1',
    penId: i < 18 ? `A${i + 1}` : `B${i - 17}`,
    hungOn: date,
    source: 'sheet',
  }));
  const results = ropes.map((rope, i) =>
    resultInput({
      id: i,
      sampleId: rope.sampleId,
      ct: positive.includes(i) ? 28 : null,
      resultClass: (positive.includes(i) ? 'positive' : 'negative') as 'positive' | 'negative',
    }),
  );
  return { ropes, results };
}
