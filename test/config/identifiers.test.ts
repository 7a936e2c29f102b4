/**
 * Identifiers that the code would take for one another are refused at load, at the key path of
 * the second; a site id must be a folder name under outbox/ on every common file system.
 * How names are matched comes from the code: sites by id, code or name (foldToken in rope
 * sheets, upper case in siteById and --site), barns by id (upper case) or name (foldToken),
 * pens by canonicalPenKey, lab assay names by foldToken.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import {
  folderNameProblem,
  INDEX_PAGE,
  matchKey,
  MAX_FOLDER_ID_LENGTH,
  RECEIPTS_FOLDER,
} from '../../src/config/names.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { canonicalPenKey } from '../../src/ingest/recordCells.js';
import { locationFromPattern } from '../../src/ingest/sampleLocation.js';
import { foldToken } from '../../src/util/fold.js';
import { configCases, configError, demoText } from './configCases.js';

const { configWith, configEdited } = configCases();

describe('names that collide', () => {
  it('refuses two site ids that differ in case only', () => {
    const error = configError(configEdited('sites.yaml', (doc) => (doc.sites[1].id = 'Hollow-Creek')));
    expect(error).toMatchObject({ keyPath: 'sites[1].id' });
    expect(error.detail).toContain('"hollow-creek" at sites[0].id');
  });

  it("refuses a site name that is another site's code, as a rope sheet's site cell would match both", () => {
    // src/config/names.ts findSite compares foldToken of id, code and name: "hcf" finds the first site by code.
    expect(foldToken('HCF')).toBe(foldToken('hcf'));
    const error = configError(configEdited('sites.yaml', (doc) => (doc.sites[1].name = 'hcf')));
    expect(error).toMatchObject({ keyPath: 'sites[1].name' });
  });

  it('still refuses a site id used twice, at the second', () => {
    expect(configError(configEdited('sites.yaml', (doc) => (doc.sites[1].id = 'hollow-creek')))).toMatchObject({
      keyPath: 'sites[1].id',
    });
  });

  it('refuses barns F1 and f1, and a barn name that is another barn’s id', () => {
    expect(configError(configEdited('sites.yaml', (doc) => (doc.sites[0].barns[1].id = 'f1')))).toMatchObject({
      keyPath: 'sites[0].barns[1].id',
    });
    const named = configError(configEdited('sites.yaml', (doc) => (doc.sites[0].barns[2].name = 'F2')));
    expect(named).toMatchObject({ keyPath: 'sites[0].barns[2].name' });
    expect(named.detail).toContain('"F2" at sites[0].barns[1].id');
    // Two barn names that fold alike ("Finisher 1" written with two spaces).
    expect(
      configError(configEdited('sites.yaml', (doc) => (doc.sites[0].barns[1].name = 'finisher  1'))),
    ).toMatchObject({ keyPath: 'sites[0].barns[1].name' });
  });

  it('refuses row labels A and a, and labels whose pens share a key (A01 and A1)', () => {
    // Barn F3 of the demo: two rows labelled N and S, no pen listed as empty or out of use.
    const rows = configError(
      configEdited('sites.yaml', (doc) => (doc.sites[0].barns[2].layout.rowLabels = ['N', 'n'])),
    );
    expect(rows).toMatchObject({ keyPath: 'sites[0].barns[2].layout.rowLabels[1]' });
    // Hand-checked: row A0's first pen is A01, row A's is A1; canonicalPenKey reads both as A1.
    expect(canonicalPenKey('A01')).toBe(canonicalPenKey('A1'));
    const pens = configError(
      configEdited('sites.yaml', (doc) => (doc.sites[0].barns[2].layout.rowLabels = ['A', 'A0'])),
    );
    expect(pens).toMatchObject({ keyPath: 'sites[0].barns[2].layout.rowLabels[1]' });
    expect(pens.detail).toContain('pens A1 and A01 are the same pen');
  });

  it('refuses a head count for a pen the layout does not have', () => {
    const error = configError(
      configEdited(
        'sites.yaml',
        (doc) => (doc.sites[0].barns[0].layout.headCount = { default: 26, pens: { a01: 20 } }),
      ),
    );
    expect(error).toMatchObject({ keyPath: 'sites[0].barns[0].layout.headCount.pens.a01' });
  });

  it('refuses two lab assay names that fold alike', () => {
    const error = configError(
      configEdited(
        'labs/northfield.yaml',
        (lab) =>
          (lab.assays['prrsv na/eu  rt-pcr'] = { assay: 'PRRSV', positiveBelow: 30, suspectBelow: 35, cycleLimit: 40 }),
      ),
    );
    expect(error.file.endsWith('northfield.yaml')).toBe(true);
    expect(error.keyPath).toBe('assays.prrsv na/eu  rt-pcr');
  });

  it('refuses assay ids and lab ids that differ in case only', () => {
    const assays = configError(
      configEdited('assays.yaml', (doc) => doc.assays.push({ ...doc.assays[0], id: 'prrsv' })),
    );
    expect(assays).toMatchObject({ keyPath: 'assays[3].id' });
    const labs = configError(
      configWith({
        'labs/westfield.yaml': demoText('labs/northfield.yaml').replace('id: northfield', 'id: Northfield'),
      }),
    );
    expect(labs.file.endsWith('westfield.yaml')).toBe(true);
    expect(labs.keyPath).toBe('id');
  });

  it('refuses a rope sensitivity keyed by an assay id that is not in assays.yaml', () => {
    // perAssayValue looks assays up by exact id: "prrsv" would silently leave the default in force.
    const error = configError(
      configEdited('sites.yaml', (doc) => (doc.programDefaults.ropeSensitivity = { default: 0.85, prrsv: 0.9 })),
    );
    expect(error).toMatchObject({ keyPath: 'programDefaults.ropeSensitivity.prrsv' });
    expect(error.detail).toContain('write PRRSV');
    const ageGroup = configError(
      configEdited(
        'sites.yaml',
        (doc) => (doc.programDefaults.ropeSensitivity.PRRSV = { default: 0.85, Nursery: 0.9 }),
      ),
    );
    expect(ageGroup).toMatchObject({ keyPath: 'programDefaults.ropeSensitivity.PRRSV.Nursery' });
  });

  it('keeps the demo, and matching through the loaded maps, as before', () => {
    const config = loadConfig(DEMO_CONFIG_DIR);
    expect(config.siteById.get(matchKey('Tamsin-Ridge'))?.id).toBe('tamsin-ridge');
    expect(locationFromPattern('TR-N1-07-20260805', config.sites, undefined)).toMatchObject({
      siteId: 'tamsin-ridge',
      barnId: 'N1',
      penId: '7',
    });
  });
});

describe('site ids as folder names', () => {
  const refused = (id: string) => configError(configEdited('sites.yaml', (doc) => (doc.sites[0].id = id)));

  it('refuses the names ropewatch writes in outbox/ itself, in any case', () => {
    for (const id of [RECEIPTS_FOLDER, 'Receipts']) {
      const error = refused(id);
      expect(error.keyPath, id).toBe('sites[0].id');
      expect(error.detail, id).toContain('ropewatch writes in outbox/');
    }
    expect(folderNameProblem(INDEX_PAGE)).toContain('ropewatch writes in outbox/');
  });

  it('refuses Windows device names (Microsoft, "Naming Files, Paths, and Namespaces")', () => {
    for (const id of ['CON', 'prn', 'Aux', 'nul', 'COM1', 'com9', 'LPT1', 'lpt9']) {
      const error = refused(id);
      expect(error.keyPath, id).toBe('sites[0].id');
      expect(error.detail, id).toContain('device name');
    }
    // Names that merely start like one are ordinary names.
    for (const id of ['console', 'COM10', 'nul-barn']) expect(folderNameProblem(id), id).toBeUndefined();
  });

  it('refuses ids over 64 characters and accepts 64', () => {
    expect(refused('s'.repeat(MAX_FOLDER_ID_LENGTH + 1))).toMatchObject({ keyPath: 'sites[0].id' });
    const config = loadConfig(
      configEdited('sites.yaml', (doc) => (doc.sites[0].id = 's'.repeat(MAX_FOLDER_ID_LENGTH))),
    );
    expect(config.sites[0]!.id).toHaveLength(64);
  });

  it('refuses path separators, dot names, control and Windows-invalid characters', () => {
    for (const id of ['..', '.', 'a/b', 'a\\b', 'a:b', 'a<b', 'a>b', 'a"b', 'a|b', 'a?b', 'a*b', 'a\u0001b', 'site.']) {
      expect(refused(id).keyPath, JSON.stringify(id)).toBe('sites[0].id');
      expect(folderNameProblem(id), JSON.stringify(id)).toBeDefined();
    }
  });
});
