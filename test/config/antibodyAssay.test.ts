/**
 * Antibody ELISA assays (measure sp-ratio) in assays.yaml and in lab profiles. The cutoffs are
 * published: PRRSV oral-fluid ELISA positive at S/P >= 0.4 (Kittawornrat et al. 2012, J Vet
 * Diagn Invest 24:262); surveillance programs also use S/P >= 1.0 (Henao-Diaz et al. 2021, Prev
 * Vet Med 188:105250). Everything else here is the configuration's own contract: refusals name
 * the file and the key path.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { configCases, configError } from './configCases.js';

const { configEdited } = configCases();

const antibodyIndex = (doc: { assays: { id: string }[] }) => doc.assays.findIndex((assay) => assay.id === 'PRRSV-AB');

describe('an antibody assay in assays.yaml', () => {
  it('loads with measure sp-ratio, its S/P cutoff and its PCR pair; other assays stay Ct by default', () => {
    const config = loadConfig(DEMO_CONFIG_DIR);
    // Kittawornrat et al. 2012: positive at S/P >= 0.4.
    expect(config.assayById.get('PRRSV-AB')).toMatchObject({
      measure: 'sp-ratio',
      positiveAtOrAbove: 0.4,
      suspectAtOrAbove: undefined,
      pairedWith: 'PRRSV',
      loadBands: [],
    });
    expect(config.assayById.get('PRRSV')).toMatchObject({ measure: 'ct', positiveBelow: 36 });
    expect(config.labById.get('northfield')!.assays.get('prrsv oral fluid antibody elisa')).toEqual({
      labAssayName: 'PRRSV Oral Fluid Antibody ELISA',
      assayId: 'PRRSV-AB',
      measure: 'sp-ratio',
      positiveAtOrAbove: 0.4,
      suspectAtOrAbove: undefined,
    });
  });

  it('refuses Ct cutoffs on an S/P assay and S/P cutoffs on a Ct assay, at their key paths', () => {
    const onSp = configError(configEdited('assays.yaml', (doc) => (doc.assays[antibodyIndex(doc)].positiveBelow = 36)));
    expect(onSp).toMatchObject({ keyPath: 'assays[2].positiveBelow' });
    expect(onSp.detail).toContain('Ct assay');
    const onCt = configError(configEdited('assays.yaml', (doc) => (doc.assays[0].positiveAtOrAbove = 0.4)));
    expect(onCt).toMatchObject({ keyPath: 'assays[0].positiveAtOrAbove' });
  });

  it('requires positiveAtOrAbove of an S/P assay, and a suspect cutoff at or below it', () => {
    expect(
      configError(configEdited('assays.yaml', (doc) => delete doc.assays[antibodyIndex(doc)].positiveAtOrAbove)),
    ).toMatchObject({ keyPath: 'assays[2].positiveAtOrAbove' });
    const above = configError(
      configEdited('assays.yaml', (doc) => (doc.assays[antibodyIndex(doc)].suspectAtOrAbove = 0.5)),
    );
    expect(above).toMatchObject({ keyPath: 'assays[2].suspectAtOrAbove' });
  });

  it('reads S/P bands highest first, and refuses Ct bands on an S/P assay', () => {
    const dir = configEdited(
      'assays.yaml',
      (doc) =>
        (doc.assays[antibodyIndex(doc)].loadBands = [
          { name: 'high', atOrAbove: 2 },
          { name: 'moderate', atOrAbove: 1 },
        ]),
    );
    expect(loadConfig(dir).assayById.get('PRRSV-AB')).toMatchObject({
      loadBands: [
        { name: 'high', atOrAbove: 2 },
        { name: 'moderate', atOrAbove: 1 },
      ],
    });
    const rising = configError(
      configEdited(
        'assays.yaml',
        (doc) =>
          (doc.assays[antibodyIndex(doc)].loadBands = [
            { name: 'moderate', atOrAbove: 1 },
            { name: 'high', atOrAbove: 2 },
          ]),
      ),
    );
    expect(rising).toMatchObject({ keyPath: 'assays[2].loadBands[1].atOrAbove' });
    const ctBand = configError(
      configEdited('assays.yaml', (doc) => (doc.assays[antibodyIndex(doc)].loadBands = [{ name: 'high', below: 25 }])),
    );
    expect(ctBand).toMatchObject({ keyPath: 'assays[2].loadBands[0]' });
  });

  it('refuses a pair with an unknown assay or with another antibody assay', () => {
    expect(
      configError(configEdited('assays.yaml', (doc) => (doc.assays[antibodyIndex(doc)].pairedWith = 'PRRSV2'))),
    ).toMatchObject({ keyPath: 'assays[2].pairedWith' });
    const twoAntibody = configError(
      configEdited('assays.yaml', (doc) => {
        doc.assays.push({
          ...doc.assays[antibodyIndex(doc)],
          id: 'IAV-AB',
          name: 'IAV antibody ELISA',
          pairedWith: undefined,
        });
        doc.assays[antibodyIndex(doc)].pairedWith = 'IAV-AB';
      }),
    );
    expect(twoAntibody).toMatchObject({ keyPath: 'assays[2].pairedWith' });
    expect(twoAntibody.detail).toContain('not a Ct (PCR) assay');
  });

  it('refuses an antibody assay without a rope sensitivity of its own: the PCR default does not apply', () => {
    const error = configError(
      configEdited('sites.yaml', (doc) => delete doc.programDefaults.ropeSensitivity['PRRSV-AB']),
    );
    expect(error.file.endsWith('sites.yaml')).toBe(true);
    expect(error.keyPath).toBe('programDefaults.ropeSensitivity.PRRSV-AB');
    // A single number for every assay is no rope sensitivity of its own either.
    expect(configError(configEdited('sites.yaml', (doc) => (doc.programDefaults.ropeSensitivity = 0.85))).keyPath).toBe(
      'programDefaults.ropeSensitivity.PRRSV-AB',
    );
  });
});

describe('an antibody assay in a lab profile', () => {
  it("takes the lab's own S/P cutoff over the assay's (a program at S/P >= 1.0, Henao-Diaz et al. 2021)", () => {
    const dir = configEdited(
      'labs/northfield.yaml',
      (lab) =>
        (lab.assays['PRRSV Oral Fluid Antibody ELISA'] = {
          assay: 'PRRSV-AB',
          positiveAtOrAbove: 1.0,
          suspectAtOrAbove: 0.4,
        }),
    );
    expect(loadConfig(dir).labById.get('northfield')!.assays.get('prrsv oral fluid antibody elisa')).toMatchObject({
      positiveAtOrAbove: 1.0,
      suspectAtOrAbove: 0.4,
    });
  });

  it('refuses Ct cutoffs on a mapping to an S/P assay, which would be read the wrong way round', () => {
    const error = configError(
      configEdited(
        'labs/northfield.yaml',
        (lab) => (lab.assays['PRRSV Oral Fluid Antibody ELISA'] = { assay: 'PRRSV-AB', positiveBelow: 0.4 }),
      ),
    );
    expect(error.file.endsWith('northfield.yaml')).toBe(true);
    expect(error.keyPath).toBe('assays.PRRSV Oral Fluid Antibody ELISA.positiveBelow');
    const ctWithSp = configError(
      configEdited('labs/northfield.yaml', (lab) => (lab.assays['PRRSV NA/EU RT-PCR'].positiveAtOrAbove = 0.4)),
    );
    expect(ctWithSp.keyPath).toBe('assays.PRRSV NA/EU RT-PCR.positiveAtOrAbove');
  });

  it('refuses a suspect cutoff above the positive one', () => {
    const error = configError(
      configEdited(
        'labs/northfield.yaml',
        (lab) => (lab.assays['PRRSV Oral Fluid Antibody ELISA'] = { assay: 'PRRSV-AB', suspectAtOrAbove: 0.6 }),
      ),
    );
    expect(error.keyPath).toBe('assays.PRRSV Oral Fluid Antibody ELISA');
  });

  it('names the numeric column result, still reads the older key ct, and refuses both at once', () => {
    const viaCt = configEdited('labs/northfield.yaml', (lab) => {
      lab.columns.ct = lab.columns.result;
      delete lab.columns.result;
    });
    expect(loadConfig(viaCt).labById.get('northfield')!.columns.result).toBe('Ct Value');
    const both = configError(configEdited('labs/northfield.yaml', (lab) => (lab.columns.ct = 'Ct Value')));
    expect(both.keyPath).toBe('columns.ct');
    const neither = configError(configEdited('labs/northfield.yaml', (lab) => delete lab.columns.result));
    expect(neither.keyPath).toBe('columns.result');
  });
});
