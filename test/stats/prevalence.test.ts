import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import stdlibBetaQuantile from '@stdlib/stats-base-dists-beta-quantile';
import binomialCdf from '@stdlib/stats-base-dists-binomial-cdf';
import { apparentPrevalence, betaQuantile, regularizedIncompleteBeta, truePrevalence } from '../../src/stats/index.js';
import { expectClose } from '../helpers/expectClose.js';

describe('beta quantile and incomplete beta', () => {
  it('matches closed forms of the regularised incomplete beta', () => {
    // By hand: I_x(a, 1) = x^a; I_x(1, b) = 1 - (1-x)^b; I_0.5(2, 3) = 11/16 (sum of binomial terms).
    expectClose(regularizedIncompleteBeta(0.3, 4, 1), 0.3 ** 4, { rel: 1e-13 }, 'x=0.3 a=4 b=1');
    expectClose(regularizedIncompleteBeta(0.3, 1, 7), 1 - 0.7 ** 7, { rel: 1e-13 }, 'x=0.3 a=1 b=7');
    expectClose(regularizedIncompleteBeta(0.5, 2, 3), 11 / 16, { rel: 1e-13 }, 'x=0.5 a=2 b=3');
    // Inverse of the same hand value: the 11/16 quantile of Beta(2, 3) is 0.5.
    expectClose(betaQuantile(11 / 16, 2, 3), 0.5, { rel: 1e-13 }, 'p=11/16 a=2 b=3');
  });

  it('matches the binomial tail identity I_p(k, n-k+1) = P(Bin(n, p) >= k) against @stdlib', () => {
    // Identity: Abramowitz & Stegun 26.5.24; oracle @stdlib binomial cdf.
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 400 }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0.001, max: 0.999, noNaN: true }),
        (n, uk, p) => {
          const k = 1 + Math.floor(uk * (n - 1));
          const expected = 1 - binomialCdf(k - 1, n, p);
          expectClose(
            regularizedIncompleteBeta(p, k, n - k + 1),
            expected,
            { rel: 1e-9, abs: 1e-13 },
            `p=${p} k=${k} n=${n}`,
          );
        },
      ),
      { numRuns: 300, seed: 51 },
    );
  });

  it('agrees with @stdlib beta quantile over integer and fractional shapes', () => {
    // Oracle: @stdlib/stats-base-dists-beta-quantile at test time.
    fc.assert(
      fc.property(
        fc.double({ min: 1e-6, max: 1 - 1e-6, noNaN: true }),
        fc.double({ min: 0.2, max: 500, noNaN: true }),
        fc.double({ min: 0.2, max: 500, noNaN: true }),
        (p, a, b) => {
          const expected = stdlibBetaQuantile(p, a, b);
          expectClose(betaQuantile(p, a, b), expected, { rel: 1e-9, abs: 1e-14 }, `p=${p} a=${a} b=${b}`);
        },
      ),
      { numRuns: 300, seed: 52 },
    );
  });

  it('finds far-tail quantiles to relative precision', () => {
    // Oracle: @stdlib beta quantile; and by hand Beta(a, 1) quantile = p^(1/a).
    expectClose(betaQuantile(1e-10, 0.5, 30), stdlibBetaQuantile(1e-10, 0.5, 30), { rel: 1e-9 }, 'p=1e-10 a=0.5 b=30');
    expectClose(betaQuantile(1e-12, 3, 1), 1e-4, { rel: 1e-9 }, 'p=1e-12 a=3 b=1');
  });
});

describe('apparent prevalence with a Clopper-Pearson interval', () => {
  it('gives the closed-form bounds for 0 of n and n of n', () => {
    // By hand (Clopper & Pearson 1934): x = 0 -> upper = 1 - (alpha/2)^(1/n); x = n -> lower = (alpha/2)^(1/n).
    const none = apparentPrevalence(0, 10);
    expect(none.lower).toBe(0);
    expectClose(none.upper, 1 - 0.025 ** 0.1, { rel: 1e-12 }, 'x=0 n=10');
    const all = apparentPrevalence(10, 10);
    expect(all.upper).toBe(1);
    expectClose(all.lower, 0.025 ** 0.1, { rel: 1e-12 }, 'x=10 n=10');
  });

  it('agrees with @stdlib beta quantiles for the exact interval', () => {
    // Oracle: lower = Beta^-1(alpha/2; x, n-x+1), upper = Beta^-1(1-alpha/2; x+1, n-x), @stdlib.
    for (const [x, n, level] of [
      [3, 20, 0.95],
      [1, 30, 0.9],
      [17, 36, 0.99],
      [250, 1000, 0.95],
    ] as const) {
      const alpha = 1 - level;
      const r = apparentPrevalence(x, n, level);
      expectClose(r.estimate, x / n, { rel: 1e-15 }, `x=${x} n=${n}`);
      expectClose(
        r.lower,
        stdlibBetaQuantile(alpha / 2, x, n - x + 1),
        { rel: 1e-9 },
        `lower x=${x} n=${n} level=${level}`,
      );
      expectClose(
        r.upper,
        stdlibBetaQuantile(1 - alpha / 2, x + 1, n - x),
        { rel: 1e-9 },
        `upper x=${x} n=${n} level=${level}`,
      );
    }
  });

  it('rejects more positives than ropes', () => {
    expect(() => apparentPrevalence(11, 10)).toThrow('`positive` must be an integer in [0, sampled], got 11');
    expect(() => apparentPrevalence(1, 10, 1)).toThrow('`level` must be a number in (0, 1), got 1');
  });
});

describe('true prevalence (Rogan & Gladen 1978)', () => {
  it('corrects apparent prevalence for Se and Sp', () => {
    // By hand: (0.2 + 0.95 - 1) / (0.9 + 0.95 - 1) = 0.15 / 0.85 = 0.176471.
    const r = truePrevalence(0.2, 0.9, 0.95);
    expectClose(r.estimate, 0.15 / 0.85, { rel: 1e-14 }, 'AP=0.2 Se=0.9 Sp=0.95');
    expect(r.clipped).toBe(false);
    expect(r.note).toBeNull();
  });

  it('clips to [0, 1] with a note when the apparent prevalence lies outside [1 - Sp, Se]', () => {
    // By hand: AP 0.02 < 1 - Sp = 0.05 -> raw (0.02 - 0.05)/0.85 < 0; AP 0.95 > Se 0.9 -> raw > 1.
    const low = truePrevalence(0.02, 0.9, 0.95);
    expect(low.estimate).toBe(0);
    expect(low.clipped).toBe(true);
    expectClose(low.raw, -0.03 / 0.85, { rel: 1e-12 }, 'raw AP=0.02');
    expect(low.note).toMatch(/clipped to 0/);
    const high = truePrevalence(0.95, 0.9, 0.95);
    expect(high.estimate).toBe(1);
    expect(high.note).toMatch(/clipped to 1/);
  });

  it('refuses a test with Se + Sp <= 1', () => {
    expect(() => truePrevalence(0.2, 0.5, 0.5)).toThrow(
      '`sensitivity + specificity` must be a number in (1, 2], got 1',
    );
  });
});
