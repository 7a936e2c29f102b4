/**
 * YAML aliases that expand without bound ("billion laughs") are refused as a configuration
 * error naming the file, in every configuration file, instead of exhausting memory or
 * escaping as a stack trace.
 */
import path from 'node:path';
import YAML from 'yaml';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { runCli } from '../helpers/runCli.js';
import { configCases, configError, demoText } from './configCases.js';

const { configWith, workspaceWith } = configCases();

/**
 * Nine levels of ten aliases each: 10^9 strings once expanded, a few hundred bytes of text
 * (the "billion laughs" construction, first described for XML entities; YAML anchors and
 * aliases allow the same).
 */
function aliasBomb(): string {
  const lines = ['l0: &l0 ["lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol", "lol"]'];
  for (let level = 1; level <= 9; level++)
    lines.push(`l${level}: &l${level} [${Array.from({ length: 10 }, () => `*l${level - 1}`).join(', ')}]`);
  return lines.join('\n') + '\n';
}

describe('YAML alias expansion', () => {
  it('is what the yaml package stops with a ReferenceError (the failure being turned into a config error)', () => {
    // yaml 2 docs, ToJSOptions.maxAliasCount: excessive aliasing throws (default 100).
    expect(() => YAML.parseDocument(aliasBomb()).toJS()).toThrow(/Excessive alias count/);
  });

  for (const name of ['sites.yaml', 'assays.yaml', 'labs/northfield.yaml']) {
    it(`is refused in ${name} with the file named`, () => {
      const dir = configWith({ [name]: aliasBomb() });
      const error = configError(dir);
      expect(error.file).toBe(path.join(dir, name));
      expect(error.detail).toContain('YAML aliases');
      expect(error.message.startsWith(path.join(dir, name))).toBe(true);
    });
  }

  it('makes the CLI exit 2 (configuration) with the file named and no stack trace', async () => {
    const ws = workspaceWith({ 'assays.yaml': aliasBomb() });
    const run = await runCli(['status', ...ws.cliFlags]);
    expect(run.code).toBe(2);
    expect(run.stderr).toContain(`${path.join(ws.paths.configDir, 'assays.yaml')}: expands YAML aliases`);
    expect(run.stderr).not.toMatch(/^\s+at /m);
  });

  it('lets one barn layout serve two hundred barns (past the yaml package default of 100)', () => {
    const doc = YAML.parse(demoText('sites.yaml'));
    const layout = { rows: 2, pensPerRow: 10, numbering: 'continuous' };
    const barns = Array.from({ length: 200 }, (_, index) => ({ id: `B${index + 1}`, layout }));
    doc.sites[0].barns = barns;
    // yaml.stringify writes the shared object once as an anchor and then 199 aliases.
    const text = YAML.stringify(doc);
    expect(text.match(/\*a\d+/g)?.length).toBe(199);
    expect(loadConfig(configWith({ 'sites.yaml': text })).sites[0]!.barns).toHaveLength(200);
  });

  it('still lets a file use a few aliases', () => {
    // Two lab assay names sharing their cutoffs through an anchor: loads as before.
    const text = [
      'id: northfield',
      'name: Northfield',
      'format: { dateFormat: yyyy-MM-dd }',
      'columns: { sampleId: Sample ID, assay: Test Name, ct: Ct Value }',
      'assays:',
      '  PRRSV NA/EU RT-PCR: &cutoffs { assay: PRRSV, positiveBelow: 36, suspectBelow: 40, cycleLimit: 40 }',
      '  PRRSV EU RT-PCR: *cutoffs',
    ].join('\n');
    const dir = configWith({ 'labs/northfield.yaml': text });
    expect(loadConfig(dir).labById.get('northfield')!.assays.size).toBe(2);
  });
});
