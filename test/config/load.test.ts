/**
 * Loading and validating the YAML config: errors name the file and the key path; explicit
 * zeros survive normalisation; cross-file references are checked. Cases are edits of the demo
 * config (src/demo/config); expected outcomes follow from the schema (src/config/schema.ts).
 */
import fs from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { ConfigError, loadConfig, perAssayValue } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const demoSites = fs.readFileSync(path.join(DEMO_CONFIG_DIR, 'sites.yaml'), 'utf8');
const demoNorthfield = fs.readFileSync(path.join(DEMO_CONFIG_DIR, 'labs', 'northfield.yaml'), 'utf8');

const workspace = workspacesPerTest();
function configWith(files: Record<string, string>): string {
  return workspace({ configFiles: files }).paths.configDir;
}
function configError(dir: string): ConfigError {
  try {
    loadConfig(dir);
  } catch (error) {
    if (error instanceof ConfigError) return error;
    throw error;
  }
  throw new Error('expected a ConfigError');
}

describe('loadConfig', () => {
  it('loads the demo config with two sites, three assays and three labs (one reporting by HL7), frozen', () => {
    const config = loadConfig(DEMO_CONFIG_DIR);
    expect(config.sites.map((site) => site.id)).toEqual(['hollow-creek', 'tamsin-ridge']);
    expect(config.assays.map((assay) => assay.id)).toEqual(['PRRSV', 'IAV', 'PRRSV-AB']);
    expect(config.labs.map((lab) => lab.id)).toEqual(['brackenridge', 'northfield', 'ostermark']);
    expect(Object.isFrozen(config)).toBe(true);
    // Site overrides merge over the program defaults.
    const tamsin = config.siteById.get('TAMSIN-RIDGE')!;
    expect(tamsin.program).toMatchObject({
      designPrevalence: { kind: 'proportion', value: 0.2 },
      intervalDays: 21,
      roundWindowDays: 3,
    });
    // Per assay and age group, falling back to the assay's then the program's default.
    const sensitivity = tamsin.program.ropeSensitivity;
    expect(perAssayValue(sensitivity, 'PRRSV', 'nursery')).toBe(0.9);
    expect(perAssayValue(sensitivity, 'PRRSV', 'sow')).toBe(0.85);
    expect(perAssayValue(sensitivity, 'IAV', 'nursery')).toBe(0.85);
  });

  it('names the file and the key path of a value outside its schema', () => {
    const dir = configWith({
      'sites.yaml': demoSites.replace('rows: 2\n          pensPerRow: 24', 'rows: 7\n          pensPerRow: 24'),
    });
    const error = configError(dir);
    expect(error.file).toBe(path.join(dir, 'sites.yaml'));
    expect(error.keyPath).toBe('sites[0].barns[1].layout.rows');
  });

  it('keeps an explicit 0 instead of replacing it by a default', () => {
    const dir = configWith({ 'sites.yaml': demoSites.replace('followUpRadius: 1.5', 'followUpRadius: 0') });
    expect(loadConfig(dir).sites[0]!.program.followUpRadius).toBe(0);
  });

  it('refuses a lab assay that names an assay not in assays.yaml', () => {
    const dir = configWith({ 'labs/northfield.yaml': demoNorthfield.replace('{ assay: IAV,', '{ assay: PEDV,') });
    const error = configError(dir);
    expect(error.file).toBe(path.join(dir, 'labs', 'northfield.yaml'));
    expect(error.keyPath).toBe('assays.Influenza A Matrix RT-PCR.assay');
  });

  it('refuses lab cutoffs out of order', () => {
    const dir = configWith({
      'labs/northfield.yaml': demoNorthfield.replace(
        'positiveBelow: 36, suspectBelow: 40',
        'positiveBelow: 39, suspectBelow: 37',
      ),
    });
    expect(configError(dir).detail).toContain('positiveBelow <= suspectBelow');
  });

  it('refuses a sample pattern without the named groups it needs, and a site id used twice', () => {
    const noPen = configWith({ 'sites.yaml': demoSites.replace('(?<pen>\\d{1,2})', '(\\d{1,2})') });
    expect(configError(noPen)).toMatchObject({ keyPath: 'sites[1].samplePattern' });
    const twice = configWith({ 'sites.yaml': demoSites.replace('id: tamsin-ridge', 'id: hollow-creek') });
    expect(configError(twice)).toMatchObject({ keyPath: 'sites[1].id' });
  });

  it('refuses invalid YAML with its line and a missing labs folder', () => {
    const broken = configWith({ 'sites.yaml': 'sites: [\n  - id: x\n' });
    expect(configError(broken).message).toContain('not valid YAML');
    const ws = workspace();
    fs.rmSync(path.join(ws.paths.configDir, 'labs'), { recursive: true });
    expect(configError(ws.paths.configDir).detail).toContain('folder is missing');
  });
});
