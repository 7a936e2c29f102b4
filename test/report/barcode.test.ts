/**
 * The barcodes of sample IDs decode to the IDs: the bars of the SVG are measured back into
 * module widths and read with the Code 128 symbol table, independently of how they were drawn.
 */
import bwipjs from 'bwip-js';
import { describe, expect, it } from 'vitest';
import { code128Svg, QUIET_ZONE_MODULES } from '../../src/report/html/barcode.js';
import { formatSampleId } from '../../src/plan/sampleId.js';

/**
 * Code 128 symbol patterns, values 0 to 106 (103-105 start A/B/C, 106 stop): element widths in
 * modules, bar first. From memory of ISO/IEC 15417:2007 Table 1; the first test checks the
 * table's own invariants (section 4.1: 11 modules, bars even, all distinct).
 */
const PATTERNS = (
  '212222 222122 222221 121223 121322 131222 122213 122312 132212 221213 221312 231212 112232 122132 122231 113222 123122 123221 223211 221132 ' +
  '221231 213212 223112 312131 311222 321122 321221 312212 322112 322211 212123 212321 232121 111323 131123 131321 112313 132113 132311 211313 ' +
  '231113 231311 112133 112331 132131 113123 113321 133121 313121 211331 231131 213113 213311 213131 311123 311321 331121 312113 312311 332111 ' +
  '314111 221411 431111 111224 111422 121124 121421 141122 141221 112214 112412 122114 122411 142112 142211 241211 221114 413111 241112 134111 ' +
  '111242 121142 121241 114212 124112 124211 411212 421112 421211 212141 214121 412121 111143 111341 131141 114113 114311 411113 411311 113141 ' +
  '114131 311141 411131 211412 211214 211232 2331112'
).split(' ');

/** Bars of a code128Svg output: [start, end) in modules, from the rectangles of its path. */
function bars(svg: string): { width: number; bars: [number, number][] } {
  const width = Number(/viewBox="0 0 (\d+) /.exec(svg)![1]);
  const d = /<path fill="#000000" d="([^"]*)"/.exec(svg)![1]!;
  const found: [number, number][] = [];
  for (const bar of d.matchAll(/M(\d+) 0h(\d+)v1h-(\d+)z/g)) {
    expect(bar[2]).toBe(bar[3]); // a closed rectangle
    found.push([Number(bar[1]), Number(bar[1]) + Number(bar[2])]);
  }
  expect(d.replace(/M(\d+) 0h(\d+)v1h-(\d+)z/g, '')).toBe(''); // nothing else drawn
  found.sort((a, b) => a[0] - b[0]);
  return { width, bars: found };
}

/** Element widths (bar, space, bar, ...) from the first bar to the last. */
function elements(list: readonly [number, number][]): number[] {
  const out: number[] = [];
  list.forEach(([start, end], index) => {
    if (index > 0) out.push(start - list[index - 1]![1]);
    out.push(end - start);
  });
  return out;
}

/**
 * Reads a Code 128 symbol from its element widths: symbols of 6 elements, the stop of 7; the
 * check symbol is (start + sum of position x value) mod 103; code sets A, B, C and their shifts
 * to another set (ISO/IEC 15417 sections 4.3.4 and 4.3.5, from memory).
 */
function decode(widths: readonly number[]): string {
  const values: number[] = [];
  let at = 0;
  while (at < widths.length - 7) {
    const value = PATTERNS.indexOf(widths.slice(at, at + 6).join(''));
    if (value < 0 || value > 105) throw new Error(`no symbol at element ${at}: ${widths.slice(at, at + 6).join('')}`);
    values.push(value);
    at += 6;
  }
  if (widths.slice(at).join('') !== PATTERNS[106]) throw new Error('no stop pattern');
  const [start, ...rest] = values as [number, ...number[]];
  if (start < 103) throw new Error('no start symbol');
  const check = rest.pop()!;
  const sum = rest.reduce((total, value, index) => total + value * (index + 1), start);
  if (sum % 103 !== check) throw new Error(`check symbol ${check}, expected ${sum % 103}`);
  let set: 'A' | 'B' | 'C' = start === 103 ? 'A' : start === 104 ? 'B' : 'C';
  let text = '';
  for (const value of rest) {
    if (set === 'C') {
      if (value < 100) text += String(value).padStart(2, '0');
      else if (value === 100) set = 'B';
      else if (value === 101) set = 'A';
      else throw new Error(`unexpected value ${value} in code set C`);
    } else if (value < 96) {
      text += set === 'B' ? String.fromCharCode(value + 32) : String.fromCharCode(value < 64 ? value + 32 : value - 64);
    } else if (value === 99) set = 'C';
    else if (value === 100 && set === 'A') set = 'B';
    else if (value === 101 && set === 'B') set = 'A';
    else throw new Error(`unexpected value ${value} in code set ${set}`);
  }
  return text;
}

const ids = [
  formatSampleId({ siteCode: 'KES', round: 7, sequence: 14 }),
  formatSampleId({ siteCode: 'HCF', round: 8, sequence: 1 }),
  formatSampleId({ siteCode: 'TRN', round: 5, sequence: 999 }),
  formatSampleId({ siteCode: 'AB12Z', round: 1234, sequence: 120 }),
];

describe('Code 128 barcodes of sample IDs', () => {
  it('uses a symbol table of 107 distinct patterns of 11 modules with an even number of bar modules', () => {
    // ISO/IEC 15417 section 4.1 (from memory): each symbol character is 11 modules (the stop
    // 13), its bars add up to an even number; a mistyped table would break one of these.
    expect(PATTERNS).toHaveLength(107);
    expect(new Set(PATTERNS).size).toBe(107);
    PATTERNS.forEach((pattern, value) => {
      const widths = [...pattern].map(Number);
      expect(
        widths.reduce((a, b) => a + b, 0),
        `value ${value}`,
      ).toBe(value === 106 ? 13 : 11);
      expect(widths.filter((_, index) => index % 2 === 0).reduce((a, b) => a + b, 0) % 2, `value ${value}`).toBe(0);
    });
  });

  it.each(ids)('draws %s so that its bars decode to the ID by the Code 128 tables', (id) => {
    const svg = code128Svg(id);
    const { width, bars: list } = bars(svg);
    expect(list.length).toBeGreaterThan(0);
    // Quiet zones of at least 10 modules (ISO/IEC 15417 section 4.3.3).
    expect(list[0]![0]).toBeGreaterThanOrEqual(QUIET_ZONE_MODULES);
    expect(width - list.at(-1)![1]).toBeGreaterThanOrEqual(QUIET_ZONE_MODULES);
    const widths = elements(list);
    expect(widths.every((w) => Number.isInteger(w) && w >= 1 && w <= 4)).toBe(true);
    expect(decode(widths)).toBe(id);
    // The same elements bwip-js reports for the symbol without drawing it (its raw encoding).
    const raw = bwipjs.raw('code128', id, {})[0]!;
    expect('sbs' in raw ? raw.sbs : null).toEqual(widths);
    expect(svg).toContain(`data-code128="${id}"`);
  });

  it('reads a wrong ID as wrong: the decoder is not blind to the text', () => {
    // A different ID gives different bars (from the table, not from the drawing code).
    expect(decode(elements(bars(code128Svg(ids[0]!)).bars))).not.toBe(ids[1]);
    const widths = elements(bars(code128Svg(ids[0]!)).bars);
    // The first data symbol replaced by the next value's pattern: the check symbol no longer fits.
    const first = PATTERNS.indexOf(widths.slice(6, 12).join(''));
    const broken = [...widths.slice(0, 6), ...[...PATTERNS[(first + 1) % 96]!].map(Number), ...widths.slice(12)];
    expect(() => decode(broken)).toThrow(/check symbol/);
  });

  it('sizes the symbol in millimetres by the X dimension and refuses what it cannot draw', () => {
    const svg = code128Svg('HCF08-001G', { moduleMm: 0.3, heightMm: 10 });
    const modules = Number(/viewBox="0 0 (\d+) /.exec(svg)![1]);
    expect(svg).toContain(`width="${Math.round(modules * 0.3 * 1000) / 1000}mm"`);
    expect(svg).toContain('height="10mm"');
    expect(() => code128Svg('')).toThrow(RangeError);
    expect(() => code128Svg('KES07\u00e9')).toThrow(RangeError);
    expect(() => code128Svg('X', { moduleMm: 0 })).toThrow(RangeError);
  });
});
