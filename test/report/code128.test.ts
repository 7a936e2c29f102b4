/**
 * The Code 128 encoder against bwip-js (Barcode Writer in Pure PostScript, from the registry),
 * which drew the labels before: the same element widths, start to stop, for every shape of
 * sample ID the planner writes and for seeded random printable text, digit-heavy so that every
 * code set switch is taken.
 */
import bwipjs from 'bwip-js';
import { describe, expect, it } from 'vitest';
import { code128Elements, code128Values } from '../../src/report/html/code128.js';
import { formatSampleId } from '../../src/plan/sampleId.js';
import { seededRng } from '../../src/util/random.js';

/** bwip-js's raw encoding of `text`: element widths, bar first (oracle). */
function reference(text: string): number[] {
  const symbol = bwipjs.raw('code128', text, {})[0]!;
  if (!('sbs' in symbol)) throw new Error('bwip-js gave no linear symbol');
  return [...symbol.sbs];
}

describe('code128Elements', () => {
  it('gives the element widths bwip-js gives for sample IDs of every site-code and round length', () => {
    // Oracle: bwip-js 4 `raw('code128', id)`; IDs by formatSampleId (site code, round 2 to 4 digits, sequence, check).
    for (const siteCode of ['KS', 'KES', 'AB12Z', '9Z', 'HCF'])
      for (const round of [1, 7, 42, 123, 1234, 9999])
        for (const sequence of [1, 14, 120, 999]) {
          const id = formatSampleId({ siteCode, round, sequence });
          expect(code128Elements(id), id).toEqual(reference(id));
        }
  });

  it('gives the element widths bwip-js gives for 3,000 seeded random printable texts', () => {
    // Oracle: bwip-js 4; runs of 1 to 7 digits at the start, middle and end exercise Start C, Code C and Code B.
    const rng = seededRng(128);
    for (let k = 0; k < 3000; k++) {
      const length = 1 + Math.floor(rng() * 12);
      let text = '';
      for (let c = 0; c < length; c++)
        text += rng() < 0.6 ? String(Math.floor(rng() * 10)) : String.fromCharCode(32 + Math.floor(rng() * 95));
      expect(code128Elements(text), JSON.stringify(text)).toEqual(reference(text));
    }
  });

  it('encodes a worked example by hand: "AB1234" as Start B, A, B, Code C, 12, 34 and check 55', () => {
    // ISO/IEC 15417 Annex E (from memory): a run of 4 digits after letters switches to set C.
    // Values: Start B 104, A 33, B 34, Code C 99, 12, 34. Check: 104 + 1*33 + 2*34 + 3*99 + 4*12 + 5*34
    // = 104 + 33 + 68 + 297 + 48 + 170 = 720; 720 mod 103 = 102 (103 * 6 = 618, 720 - 618 = 102).
    expect(code128Values('AB1234')).toEqual([104, 33, 34, 99, 12, 34, 102]);
  });

  it('refuses empty text and characters outside printable ASCII', () => {
    expect(() => code128Values('')).toThrow(RangeError);
    expect(() => code128Values('A\u00e9')).toThrow(RangeError);
    expect(() => code128Values('A\n')).toThrow(RangeError);
  });
});
