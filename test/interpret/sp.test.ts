/**
 * S/P cells of an antibody ELISA: read, then classified the other way round from a Ct (more S/P,
 * more antibody). Cutoffs: PRRSV oral-fluid ELISA positive at S/P >= 0.4 (Kittawornrat et al.
 * 2012, J Vet Diagn Invest 24:262); surveillance programs also use S/P >= 1.0 (Henao-Diaz et al.
 * 2021, Prev Vet Med 188:105250). S/P = (OD sample - OD negative control) / (OD positive control -
 * OD negative control), so a sample under the negative control reads slightly below 0 (common
 * practice, no source); the [-1, 10] range is ropewatch's plausibility bound (common practice, no
 * source).
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import type { SpAssay, SpLabAssay } from '../../src/config/types.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { classify, spBandOf } from '../../src/interpret/classify.js';
import { readCt } from '../../src/interpret/ct.js';
import { readSp, SP_RANGE, type SpReading } from '../../src/interpret/sp.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const northfield = config.labById.get('northfield')!;
const ostermark = config.labById.get('ostermark')!;
const assay = config.assayById.get('PRRSV-AB') as SpAssay;
/** Northfield's mapping: positive at S/P >= 0.4 (Kittawornrat et al. 2012). */
const at04 = northfield.assays.get('prrsv oral fluid antibody elisa') as SpLabAssay;
/** A program reading at S/P >= 1.0 (Henao-Diaz et al. 2021), with a suspect band from 0.4. */
const at10: SpLabAssay = { ...at04, positiveAtOrAbove: 1.0, suspectAtOrAbove: 0.4 };
const sp = (value: number): SpReading => ({ kind: 'sp', sp: value });

describe('readSp', () => {
  it('reads a decimal S/P with the lab decimal mark, a sign allowed', () => {
    // Oracle: Number() on the text with the decimal comma turned into a dot.
    expect(readSp('0.21', northfield)).toEqual({ kind: 'sp', sp: 0.21 });
    expect(readSp(' 1.45 ', northfield)).toEqual({ kind: 'sp', sp: 1.45 });
    expect(readSp('-0.03', northfield)).toEqual({ kind: 'sp', sp: -0.03 });
    expect(readSp('0,52', ostermark)).toEqual({ kind: 'sp', sp: 0.52 });
    // -0 reads as 0 (one value, one text).
    expect(Object.is((readSp('-0.00', northfield) as { sp: number }).sp, 0)).toBe(true);
  });

  it('has no "not detected": a blank is no reading, a word is refused', () => {
    expect(readSp('', northfield)).toEqual({ kind: 'missing' });
    // "Undetermined" is Northfield's not-detected word for a Ct; for an S/P it means nothing.
    expect(readSp('Undetermined', northfield)).toMatchObject({ kind: 'error', code: 'bad-sp' });
    expect(readSp('negative', northfield)).toMatchObject({ kind: 'error', code: 'bad-sp' });
  });

  it('refuses exponents, percentages and the wrong decimal mark instead of guessing', () => {
    for (const text of ['4e-1', '40%', '0x1', 'NaN', '1.2.3'])
      expect(readSp(text, northfield)).toMatchObject({ kind: 'error', code: 'bad-sp' });
    const comma = readSp('0,52', northfield);
    expect(comma).toMatchObject({ kind: 'error', code: 'bad-sp' });
    expect((comma as { detail: string }).detail).toContain('it would read as 0.52');
  });

  it('refuses values outside [-1, 10], inclusive bounds kept', () => {
    expect(readSp(String(SP_RANGE.max), northfield)).toEqual({ kind: 'sp', sp: 10 });
    expect(readSp(String(SP_RANGE.min), northfield)).toEqual({ kind: 'sp', sp: -1 });
    expect(readSp('10.01', northfield)).toMatchObject({ kind: 'error', code: 'sp-out-of-range' });
    expect(readSp('45', northfield)).toMatchObject({ kind: 'error', code: 'sp-out-of-range' });
    expect(readSp('-1.5', northfield)).toMatchObject({ kind: 'error', code: 'sp-out-of-range' });
  });

  it('is never asked of a Ct assay, nor readCt of an S/P assay', () => {
    expect(() => readCt('0.21', northfield, at04)).toThrow(RangeError);
  });
});

describe('classify an S/P: positive at or above the cutoff', () => {
  it('at S/P >= 0.4 (Kittawornrat et al. 2012): 0.4 positive, just under it negative', () => {
    expect(classify(sp(0.4), at04, assay, undefined).resultClass).toBe('positive');
    expect(classify(sp(0.399), at04, assay, undefined).resultClass).toBe('negative');
    // The case a Ct reading inverts: S/P 0.21 is no antibody, never a "Ct of 0.21".
    expect(classify(sp(0.21), at04, assay, undefined)).toMatchObject({ resultClass: 'negative', load: 0.21 });
    expect(classify(sp(1.45), at04, assay, undefined).reason).toContain('exposure, not necessarily current infection');
  });

  it('at S/P >= 1.0 (Henao-Diaz et al. 2021) with a suspect band from 0.4: [0.4, 1.0) suspect', () => {
    expect(classify(sp(1.0), at10, assay, undefined).resultClass).toBe('positive');
    expect(classify(sp(0.99), at10, assay, undefined).resultClass).toBe('suspect');
    expect(classify(sp(0.4), at10, assay, undefined).resultClass).toBe('suspect');
    expect(classify(sp(0.39), at10, assay, undefined).resultClass).toBe('negative');
  });

  it('gives the load max(0, S/P), a blank invalid (no reading), a failed control invalid', () => {
    expect(classify(sp(-0.05), at04, assay, undefined)).toMatchObject({ resultClass: 'negative', load: 0 });
    expect(classify(sp(0.52), at04, assay, undefined).load).toBe(0.52);
    expect(classify({ kind: 'missing' }, at04, assay, undefined)).toMatchObject({ resultClass: 'invalid', load: 0 });
    expect(classify({ kind: 'missing' }, at04, assay, undefined).reason).toContain('no S/P value');
    expect(classify(sp(1.2), at04, assay, 'FAIL').resultClass).toBe('invalid');
  });

  it('refuses a reading of the other measure', () => {
    const pcrAssay = config.assayById.get('PRRSV')!;
    const pcrLab = northfield.assays.get('prrsv na/eu rt-pcr')!;
    expect(() => classify(sp(0.5), pcrLab, pcrAssay, undefined)).toThrow(RangeError);
    expect(() => classify({ kind: 'detected', ct: 30 }, at04, assay, undefined)).toThrow(RangeError);
  });
});

describe('S/P bands', () => {
  it('names the first band at or under the S/P, highest first; none below every band', () => {
    // A program setting, by hand: high >= 2, moderate >= 1.
    const bands = [
      { name: 'high', atOrAbove: 2 },
      { name: 'moderate', atOrAbove: 1 },
    ];
    expect(spBandOf(2, bands)).toBe('high');
    expect(spBandOf(1.99, bands)).toBe('moderate');
    expect(spBandOf(1, bands)).toBe('moderate');
    expect(spBandOf(0.99, bands)).toBeUndefined();
    expect(spBandOf(3, [])).toBeUndefined();
  });
});
