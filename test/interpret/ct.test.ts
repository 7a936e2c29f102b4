/**
 * Reading a Ct cell the way each lab writes it. The demo lab profiles (src/demo/config/labs) are
 * the two dialects: Northfield writes "." decimals, words for not detected and a 40-cycle run;
 * Ostermark writes "," decimals, 0 for not detected and a 45-cycle run. How labs write "not
 * detected" (blank, a word, the cycle limit, ">40", 0) is common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import type { LabAssay, LabProfile } from '../../src/config/types.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { MAX_PLAUSIBLE_CYCLES, parseDecimal, readCt } from '../../src/interpret/ct.js';
import { expectClose } from '../helpers/expectClose.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const northfield = config.labById.get('northfield')!;
const ostermark = config.labById.get('ostermark')!;
const nfPrrsv = northfield.assays.get('prrsv na/eu rt-pcr')!;
const omPrrsv = ostermark.assays.get('prrsv rt-qpcr')!;

function detected(raw: string, lab: LabProfile, assay: LabAssay): number {
  const reading = readCt(raw, lab, assay);
  if (reading.kind !== 'detected') throw new Error(`${JSON.stringify(raw)} read as ${reading.kind}, expected detected`);
  return reading.ct;
}

describe('readCt: numbers', () => {
  it('reads a plain decimal Ct and ignores surrounding spaces', () => {
    // By hand: "31.5" is 31.5 cycles.
    expectClose(detected('31.5', northfield, nfPrrsv), 31.5, { abs: 0 }, 'northfield "31.5"');
    expectClose(detected('  22.04 ', northfield, nfPrrsv), 22.04, { abs: 1e-12 }, 'northfield " 22.04 "');
    expectClose(detected('+28', northfield, nfPrrsv), 28, { abs: 0 }, 'northfield "+28"');
  });

  it('reads a decimal comma only where the lab profile declares it', () => {
    // By hand: "35,2" is 35.2 cycles in a decimal-comma locale, and not a number in a "." locale.
    expectClose(detected('35,2', ostermark, omPrrsv), 35.2, { abs: 1e-12 }, 'ostermark "35,2"');
    const wrongMark = readCt('35,2', northfield, nfPrrsv);
    expect(wrongMark.kind).toBe('error');
    if (wrongMark.kind === 'error') {
      expect(wrongMark.code).toBe('bad-ct');
      // The message points at the other decimal mark so the clerk can fix the profile.
      expect(wrongMark.detail).toContain('35.2');
    }
    expect(readCt('35.2', ostermark, omPrrsv)).toMatchObject({ kind: 'error', code: 'bad-ct' });
  });

  it('refuses exponents, signs, NaN and infinities as Ct values', () => {
    for (const raw of ['1e3', '3.2e1', '-5', '-0', 'NaN', 'Infinity', '0x1F', '31.5.2', '31,5', '1,234.5', '--']) {
      const reading = readCt(raw, northfield, nfPrrsv);
      expect(reading, raw).toMatchObject({ kind: 'error', code: 'bad-ct' });
    }
  });

  it('parseDecimal never returns NaN for text that is not a decimal', () => {
    expect(parseDecimal('NaN', '.')).toBeUndefined();
    expect(parseDecimal('', '.')).toBeUndefined();
    expect(parseDecimal(',', ',')).toBeUndefined();
    expectClose(parseDecimal(',5', ',')!, 0.5, { abs: 0 }, 'parseDecimal(",5", ",")');
  });
});

describe('readCt: not detected', () => {
  it('reads the profile tokens case- and space-insensitively as not detected', () => {
    for (const raw of ['Undetermined', 'UNDETERMINED', ' not   detected ', 'No Ct']) {
      expect(readCt(raw, northfield, nfPrrsv).kind, raw).toBe('not-detected');
    }
    for (const raw of ['neg.', 'Negativ']) expect(readCt(raw, ostermark, omPrrsv).kind, raw).toBe('not-detected');
    // A token of one lab is not a token of another.
    expect(readCt('neg.', northfield, nfPrrsv)).toMatchObject({ kind: 'error', code: 'bad-ct' });
  });

  it('reads a blank cell as not detected or as missing, as the profile says', () => {
    expect(readCt('', northfield, nfPrrsv).kind).toBe('not-detected');
    expect(readCt('   ', northfield, nfPrrsv).kind).toBe('not-detected');
    const strict: LabProfile = { ...northfield, blankIsNotDetected: false };
    expect(readCt('', strict, nfPrrsv).kind).toBe('missing');
  });

  it('reads ">N" as not detected only when N reaches the cycle limit', () => {
    expect(readCt('>40', northfield, nfPrrsv).kind).toBe('not-detected');
    expect(readCt('> 40', northfield, nfPrrsv).kind).toBe('not-detected');
    expect(readCt('>45', ostermark, omPrrsv).kind).toBe('not-detected');
    // Ostermark runs 45 cycles: ">40" there is a signal-free statement about fewer cycles than were run.
    expect(readCt('>40', ostermark, omPrrsv)).toMatchObject({ kind: 'error', code: 'bad-ct' });
    expect(readCt('>35', northfield, nfPrrsv)).toMatchObject({ kind: 'error', code: 'bad-ct' });
  });

  it('reads 0 as not detected when the lab declares it, and refuses it otherwise: never a strong positive', () => {
    // A Ct of 0 is never a strong positive (common practice, no source); some labs publish 0 as "not detected".
    expect(readCt('0', ostermark, omPrrsv).kind).toBe('not-detected');
    expect(readCt('0,0', ostermark, omPrrsv).kind).toBe('not-detected');
    for (const raw of ['0', '0.0', '0.00']) {
      const reading = readCt(raw, northfield, nfPrrsv);
      expect(reading, raw).toMatchObject({ kind: 'error', code: 'ct-out-of-range' });
    }
  });

  it('reads the cycle limit itself as not detected, or refuses it when the profile says it is not', () => {
    // Northfield PRRSV: 40 cycles. Common practice, no source: Ct = cycle limit means no crossing.
    expect(readCt('40', northfield, nfPrrsv).kind).toBe('not-detected');
    expect(readCt('40.00', northfield, nfPrrsv).kind).toBe('not-detected');
    expectClose(detected('39.99', northfield, nfPrrsv), 39.99, { abs: 1e-12 }, 'northfield 39.99 just below the limit');
    // Ostermark runs 45 cycles, so 40 and 44,9 are real signals there.
    expectClose(detected('40', ostermark, omPrrsv), 40, { abs: 0 }, 'ostermark 40 of 45 cycles');
    expect(readCt('45', ostermark, omPrrsv).kind).toBe('not-detected');
    const strict: LabProfile = { ...northfield, cycleLimitIsNotDetected: false };
    expect(readCt('40', strict, nfPrrsv)).toMatchObject({ kind: 'error', code: 'ct-out-of-range' });
    expect(readCt('41.5', strict, nfPrrsv)).toMatchObject({ kind: 'error', code: 'ct-out-of-range' });
  });

  it('refuses a Ct beyond any PCR run', () => {
    // Common practice, no source: no run goes beyond 60 cycles.
    expect(MAX_PLAUSIBLE_CYCLES).toBe(60);
    for (const raw of ['60.5', '61', '400']) {
      expect(readCt(raw, northfield, nfPrrsv), raw).toMatchObject({ kind: 'error', code: 'ct-out-of-range' });
    }
  });
});
