/**
 * Ct to a class. Cutoffs: common practice, no source; the lab's validated cutoffs govern (the
 * demo lab profiles carry them: Northfield PRRSV positive below 36, suspect below 40, 40 cycles;
 * Ostermark PRRSV positive below 35, suspect below 38, 45 cycles). Load bands are a program
 * setting (assays.yaml: high below 25, moderate below 30). Load score L = max(0, C_max - Ct), a load
 * score for continuous statistics (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { classify, CLASS_SEVERITY, loadBandOf } from '../../src/interpret/classify.js';
import type { CtReading } from '../../src/interpret/ct.js';
import { expectClose } from '../helpers/expectClose.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const prrsvAssay = config.assayById.get('PRRSV')!;
if (prrsvAssay.measure !== 'ct') throw new Error('PRRSV is a Ct assay in the demo configuration');
const prrsv = prrsvAssay;
const nf = config.labById.get('northfield')!.assays.get('prrsv na/eu rt-pcr')!;
const om = config.labById.get('ostermark')!.assays.get('prrsv rt-qpcr')!;
const ct = (value: number): CtReading => ({ kind: 'detected', ct: value });

describe('classify: cutoff boundaries', () => {
  it('calls a Ct strictly below positiveBelow positive and the cutoff itself suspect', () => {
    // Common practice, no source; the lab's validated cutoffs govern: positive is "Ct < 36".
    expect(classify(ct(35.99), nf, prrsv, undefined).resultClass).toBe('positive');
    expect(classify(ct(36), nf, prrsv, undefined).resultClass).toBe('suspect');
    expect(classify(ct(39.99), nf, prrsv, undefined).resultClass).toBe('suspect');
  });

  it('reads a late signal at or above suspectBelow as negative, keeping its Ct', () => {
    // Ostermark: suspect band [35, 38), then negative up to its 45-cycle limit.
    expect(classify(ct(34.9), om, prrsv, undefined).resultClass).toBe('positive');
    expect(classify(ct(35), om, prrsv, undefined).resultClass).toBe('suspect');
    const late = classify(ct(38), om, prrsv, undefined);
    expect(late.resultClass).toBe('negative');
    expect(late.reason).toContain('late signal');
  });

  it('uses the lab profile cutoffs, not the assay defaults: the same Ct reads differently at two labs', () => {
    // Ct is comparable only within one lab and assay (common practice, no source); 35.5 is positive at one, suspect at the other.
    expect(classify(ct(35.5), nf, prrsv, undefined).resultClass).toBe('positive');
    expect(classify(ct(35.5), om, prrsv, undefined).resultClass).toBe('suspect');
  });

  it('reads not detected as negative with no load', () => {
    const result = classify({ kind: 'not-detected', reason: 'x' }, nf, prrsv, undefined);
    expect(result).toMatchObject({ resultClass: 'negative', loadBand: undefined, load: 0 });
  });

  it('reads a missing Ct (blank where blank is not "not detected") as invalid, not negative', () => {
    expect(classify({ kind: 'missing' }, nf, prrsv, undefined).resultClass).toBe('invalid');
  });
});

describe('classify: internal control', () => {
  it('calls a failed internal control invalid whatever the Ct says, never negative', () => {
    // Common practice, no source: a failed extraction/internal control means retest.
    for (const reading of [ct(22), ct(37), { kind: 'not-detected', reason: 'blank' } as CtReading]) {
      const result = classify(reading, nf, prrsv, 'FAIL');
      expect(result.resultClass).toBe('invalid');
      expect(result.load).toBe(0);
      expect(result.loadBand).toBeUndefined();
    }
  });

  it('ranks invalid above negative so a failed control never hides behind a negative rope', () => {
    expect(CLASS_SEVERITY.positive).toBeGreaterThan(CLASS_SEVERITY.suspect);
    expect(CLASS_SEVERITY.suspect).toBeGreaterThan(CLASS_SEVERITY.invalid);
    expect(CLASS_SEVERITY.invalid).toBeGreaterThan(CLASS_SEVERITY.negative);
  });
});

describe('classify: load', () => {
  it('puts a Ct in the first band whose upper bound exceeds it, else low', () => {
    // Program setting (assays.yaml): high < 25 <= moderate < 30 <= low.
    expect(loadBandOf(24.99, prrsv.loadBands)).toBe('high');
    expect(loadBandOf(25, prrsv.loadBands)).toBe('moderate');
    expect(loadBandOf(29.99, prrsv.loadBands)).toBe('moderate');
    expect(loadBandOf(30, prrsv.loadBands)).toBe('low');
    expect(classify(ct(22), nf, prrsv, undefined).loadBand).toBe('high');
  });

  it('scores load as the cycle limit minus Ct, per lab', () => {
    // Common practice, no source: L = max(0, C_max - Ct). By hand: 40 - 22 = 18 (Northfield), 45 - 22 = 23 (Ostermark).
    expectClose(classify(ct(22), nf, prrsv, undefined).load, 18, { abs: 1e-12 }, 'northfield Ct 22');
    expectClose(classify(ct(22), om, prrsv, undefined).load, 23, { abs: 1e-12 }, 'ostermark Ct 22');
    expectClose(classify(ct(38.5), om, prrsv, undefined).load, 6.5, { abs: 1e-12 }, 'ostermark late Ct 38.5');
  });

  it('a tenfold difference in template is about 3.32 cycles at 100% efficiency', () => {
    // Cycles per tenfold = 1 / log10(1 + E); E = 1 gives log2(10) = 3.3219 (MIQE, Bustin et al. 2009).
    // So two ropes whose load scores differ by 3.32 differ about tenfold in nucleic acid.
    const high = classify(ct(24), nf, prrsv, undefined).load;
    const low = classify(ct(24 + 1 / Math.log10(2)), nf, prrsv, undefined).load;
    expectClose(high - low, Math.log2(10), { rel: 1e-12 }, 'load difference for a tenfold dilution at E=1');
  });
});
