import { describe, expect, it } from 'vitest';
import {
  formatSampleId,
  isWriteFriendlyCheck,
  looksLikePlannedId,
  mod37CheckCharacter,
  parseSampleId,
  pureSystemCheckValue,
} from '../../src/plan/index.js';

const ALPHABET = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ';

describe('ISO/IEC 7064 check characters', () => {
  it('reproduces a published MOD 11-2 check digit with the generic pure-system routine', () => {
    // ORCID identifiers use ISO 7064 MOD 11-2; ORCID's documented example 0000-0002-1825-0097
    // has check digit 7 (from memory).
    expect(pureSystemCheckValue([0, 0, 0, 0, 0, 0, 0, 2, 1, 8, 2, 5, 0, 0, 9], 11)).toBe(7);
  });

  it('computes MOD 37-2 by the recursion, checked by hand for a short string', () => {
    // By hand, "A1": P = 2 (0 + 10) = 20; P = 2 (20 + 1) mod 37 = 5; c = (38 - 5) mod 37 = 33 -> "X".
    expect(mod37CheckCharacter('A1')).toBe('X');
    // By hand, "KES07014" (K=20 E=14 S=28): P = 3, 34, 13, 26, 29, 21, 7, 22; c = 38 - 22 = 16 -> "G".
    expect(mod37CheckCharacter('KES07014')).toBe('G');
    // By hand, "01": P = 0, then 2 (0 + 1) = 2; c = (38 - 2) mod 37 = 36 -> "*".
    expect(mod37CheckCharacter('01')).toBe('*');
  });
});

describe('sample IDs', () => {
  it('formats site, round, sequence and check character, and parses them back', () => {
    const id = formatSampleId({ siteCode: 'kes', round: 7, sequence: 14 });
    expect(id).toBe(`KES07-014${mod37CheckCharacter('KES07014')}`);
    expect(parseSampleId(id)).toEqual({ ok: true, siteCode: 'KES', round: 7, sequence: 14, id });
    expect(parseSampleId(` ${id.toLowerCase().replace('-', ' - ')} `)).toMatchObject({ ok: true, id });
    // The hyphen is required: a digit typed in its place must not yield another valid ID.
    expect(parseSampleId(id.replace('-', ''))).toMatchObject({ ok: false, code: 'malformed' });
    const big = formatSampleId({ siteCode: 'N2W', round: 123, sequence: 999 });
    expect(parseSampleId(big)).toMatchObject({ ok: true, siteCode: 'N2W', round: 123, sequence: 999 });
  });

  it('catches every single-character substitution and every adjacent transposition', () => {
    const ids = [
      formatSampleId({ siteCode: 'KES', round: 7, sequence: 14 }),
      formatSampleId({ siteCode: 'AB', round: 0, sequence: 1 }),
      formatSampleId({ siteCode: 'X9Q2Z', round: 9876, sequence: 505 }),
      formatSampleId({ siteCode: 'MOOR', round: 42, sequence: 100 }),
    ];
    let substitutions = 0;
    let transpositions = 0;
    for (const id of ids) {
      for (let i = 0; i < id.length; i++) {
        for (const c of `${ALPHABET}*-`) {
          if (c === id[i]) continue;
          const typo = id.slice(0, i) + c + id.slice(i + 1);
          expect(parseSampleId(typo).ok, `${id} -> ${typo}`).toBe(false);
          substitutions++;
        }
        if (i + 1 < id.length && id[i] !== id[i + 1]) {
          const swapped = id.slice(0, i) + id[i + 1] + id[i] + id.slice(i + 2);
          expect(parseSampleId(swapped).ok, `${id} -> ${swapped}`).toBe(false);
          transpositions++;
        }
      }
    }
    expect(substitutions).toBeGreaterThan(1000);
    expect(transpositions).toBeGreaterThan(30);
  });

  it('tells a malformed ID from one with a bad check character', () => {
    const id = formatSampleId({ siteCode: 'KES', round: 7, sequence: 14 });
    const wrongCheck = id.slice(0, -1) + (id.endsWith('0') ? '1' : '0');
    expect(parseSampleId(wrongCheck)).toMatchObject({ ok: false, code: 'bad-check' });
    expect(looksLikePlannedId(wrongCheck)).toBe(true);
    for (const text of [
      '',
      'KES7-014X',
      'KES007-014X',
      'K07-014X',
      'KES07-14X',
      'KES07-000X',
      '12307-014X',
      'KES07-014',
    ]) {
      expect(parseSampleId(text), text).toMatchObject({ ok: false, code: 'malformed' });
      expect(looksLikePlannedId(text), text).toBe(false);
    }
  });

  it('rejects site codes, rounds and sequences outside the grammar', () => {
    expect(() => formatSampleId({ siteCode: 'K', round: 1, sequence: 1 })).toThrow(RangeError);
    expect(() => formatSampleId({ siteCode: 'KES1', round: 1, sequence: 1 })).toThrow(/ending in a letter/);
    expect(() => formatSampleId({ siteCode: 'KES', round: 1, sequence: 1000 })).toThrow(
      '`sequence` must be an integer in [1, 999], got 1000',
    );
  });

  it('flags check characters I, O and L as hard to write', () => {
    expect(isWriteFriendlyCheck('KES07-014O')).toBe(false);
    expect(isWriteFriendlyCheck('KES07-014G')).toBe(true);
  });
});
