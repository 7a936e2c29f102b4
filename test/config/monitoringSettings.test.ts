/**
 * The settings of positive-barn monitoring: defaults when left out, the values a program gives,
 * and a refusal naming the file and key path for a value outside the schema (src/config/schema.ts).
 * Defaults: 2 negative rounds in a row to clear, 4 tracking ropes (common practice, no source).
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const demoSites = fs.readFileSync(path.join(DEMO_CONFIG_DIR, 'sites.yaml'), 'utf8');
const workspace = workspacesPerTest();
const withSites = (text: string) => workspace({ configFiles: { 'sites.yaml': text } }).paths.configDir;

describe('monitoring settings', () => {
  it('defaults to 2 negative rounds and 4 tracking ropes', () => {
    expect(loadConfig(withSites(demoSites)).sites[0]!.program).toMatchObject({
      clearAfterNegativeRounds: 2,
      trackingRopes: 4,
    });
  });

  it('takes the program values, an explicit 0 tracking ropes included', () => {
    const text = demoSites.replace(
      'followUpRadius: 1.5',
      'followUpRadius: 1.5\n  clearAfterNegativeRounds: 3\n  trackingRopes: 0',
    );
    expect(loadConfig(withSites(text)).sites[0]!.program).toMatchObject({
      clearAfterNegativeRounds: 3,
      trackingRopes: 0,
    });
  });

  it('refuses 0 rounds to clear, naming the file and key path', () => {
    const dir = withSites(
      demoSites.replace('followUpRadius: 1.5', 'followUpRadius: 1.5\n  clearAfterNegativeRounds: 0'),
    );
    let error: unknown;
    try {
      loadConfig(dir);
    } catch (caught) {
      error = caught;
    }
    expect(error).toBeInstanceOf(ConfigError);
    expect((error as ConfigError).file).toBe(path.join(dir, 'sites.yaml'));
    expect((error as ConfigError).keyPath).toBe('programDefaults.clearAfterNegativeRounds');
  });
});
