import { describe, expect, it } from 'vitest';
import { formatJoinCountP, formatPValue, formatPercent, formatPercentSignificant } from '../src/util/format.js';

// Rounding half away from zero at one decimal is Number.prototype.toFixed (ECMA-262, 21.1.3.3);
// the guard itself is common practice, no source: a freedom of 99.96% is not certainty.
describe('percentages for people', () => {
  it('never rounds a probability that is not 1 up to 100.0% or one that is not 0 down to 0.0%', () => {
    expect(formatPercent(0.99963)).toBe('> 99.9%');
    expect(formatPercent(1)).toBe('100.0%');
    expect(formatPercent(0.0004)).toBe('< 0.1%');
    expect(formatPercent(0)).toBe('0.0%');
    expect(formatPercent(0.8305369)).toBe('83.1%');
  });

  it('prints 99.996% as "> 99.9%", not 100.0%, and 0.004% as "< 0.1%", not 0.0%', () => {
    expect(formatPercent(0.99996)).toBe('> 99.9%');
    expect(formatPercent(0.00004)).toBe('< 0.1%');
  });

  it('keeps the one-decimal text when it does not round to 100.0% or 0.0%', () => {
    // 0.9993 -> 99.93 -> "99.9"; 0.9994 -> 99.94 -> "99.9"; 0.0006 -> 0.06 -> "0.1"
    expect(formatPercent(0.9993)).toBe('99.9%');
    expect(formatPercent(0.9994)).toBe('99.9%');
    expect(formatPercent(0.0006)).toBe('0.1%');
    expect(formatPercent(0.95)).toBe('95.0%');
  });

  it('says n/a for a missing or non-finite value instead of printing NaN%', () => {
    expect(formatPercent(null)).toBe('n/a');
    expect(formatPercent(undefined)).toBe('n/a');
    expect(formatPercent(Number.NaN)).toBe('n/a');
  });
});

describe('p-values for people', () => {
  it('prints three decimals, and "< 0.001" below a thousandth', () => {
    expect(formatPValue(0.0004)).toBe('< 0.001');
    expect(formatPValue(0.001)).toBe('0.001');
    expect(formatPValue(0.04567)).toBe('0.046');
    expect(formatPValue(null)).toBe('n/a');
  });
});

describe('join-count p-values for people', () => {
  it('names how the p-value was found: exact enumeration or permutation (Monte Carlo)', () => {
    // The wording is common practice, no source; the two ways of finding the p-value are Cliff & Ord (1981), Spatial Processes: Models and Applications (from memory).
    expect(formatJoinCountP('exact', 0.0123)).toBe('exact p = 0.012');
    expect(formatJoinCountP('monte-carlo', 0.0004)).toBe('permutation p = < 0.001');
  });
});

// Significant figures are Number.prototype.toPrecision (ECMA-262, 21.1.3.5), rounding half up
// at the third figure; dropping trailing zeros through Number() is common practice, no source.
describe('percentages to three significant figures', () => {
  it('keeps three significant figures at any size and drops trailing zeros', () => {
    expect(formatPercentSignificant(0.123456)).toBe('12.3%');
    expect(formatPercentSignificant(0.000123456)).toBe('0.0123%');
    expect(formatPercentSignificant(0.8305369)).toBe('83.1%');
    expect(formatPercentSignificant(0.95)).toBe('95%');
    expect(formatPercentSignificant(0)).toBe('0%');
  });

  it('rounds 0.99996 to "100%", where formatPercent says "> 99.9%"', () => {
    expect(formatPercentSignificant(0.99996)).toBe('100%');
    expect(formatPercent(0.99996)).toBe('> 99.9%');
  });
});
