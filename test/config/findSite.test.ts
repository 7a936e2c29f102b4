/**
 * One lookup of a site by its id, code or name: the rope sheet's site cell, `plan --site` and
 * `report --site` all find sites through findSite.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { findSite } from '../../src/config/names.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { configCases, configError } from './configCases.js';
import { runCli } from '../helpers/runCli.js';

const { configEdited, workspaceWith } = configCases();

describe('findSite', () => {
  const sites = loadConfig(DEMO_CONFIG_DIR).sites;

  it('finds a site by its id, its code or its name, ignoring case and spacing', () => {
    // The demo's sites.yaml: hollow-creek, code HCF, name "Hollow Creek Finisher".
    for (const text of [
      'hollow-creek',
      'HOLLOW-CREEK',
      'HCF',
      'hcf',
      'Hollow Creek Finisher',
      '  hollow   creek finisher ',
    ])
      expect(findSite(sites, text)?.id, text).toBe('hollow-creek');
  });

  it('finds no site for a text that is none of them, nor for a part of one', () => {
    for (const text of ['', 'hollow', 'HC', 'Hollow Creek', 'hollow-creek-2'])
      expect(findSite(sites, text), text).toBeUndefined();
  });

  it('can trust one answer: sites.yaml refuses a site code another site already has', () => {
    const dir = configEdited('sites.yaml', (doc) => {
      doc.sites[1].code = 'HCF';
    });
    expect(configError(dir).problems.map((problem) => problem.keyPath)).toContain('sites[1].code');
  });
});

describe('--site on report and plan', () => {
  it('takes the site code as plan does, and names the sites file for an unknown site', async () => {
    const ws = workspaceWith({});
    const byCode = await runCli(['report', '--site', 'hcf', '--json', ...ws.cliFlags]);
    expect(byCode.code, byCode.stderr).toBe(0);
    expect((JSON.parse(byCode.stdout) as { sites: { site: string }[] }).sites.map((site) => site.site)).toEqual([
      'hollow-creek',
    ]);
    const unknown = await runCli(['report', '--site', 'nowhere', ...ws.cliFlags]);
    expect(unknown.code).toBe(2);
    expect(unknown.stderr).toContain(`no site "nowhere" in ${ws.paths.configDir}/sites.yaml`);
  });
});
