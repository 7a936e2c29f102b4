import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  binomialDetection,
  designInfectedPens,
  detectionFor,
  roundsToReach,
  sampleSize,
} from '../../src/stats/index.js';
import { expectClose } from '../helpers/expectClose.js';
import { randomInt, seededRng } from '../../src/util/random.js';
import oracle from '../fixtures/stats/oracle.json' with { type: 'json' };

describe('sample size, finite barn', () => {
  it('matches the published finite-population rows', () => {
    // Cameron & Baldock 1998 (exact search); MacDiarmid 1988 gives an approximation (from memory): N=100 d=5 C=0.95 -> 45.
    expect(sampleSize({ pens: 100, infected: 5, confidence: 0.95 }).sampled).toBe(45);
    // Same sources: N=100 d=10 C=0.95 -> 25.
    expect(sampleSize({ pens: 100, infected: 10, confidence: 0.95 }).sampled).toBe(25);
  });

  it('agrees with a linear search on the @stdlib hypergeometric cdf (committed fixture)', () => {
    // Oracle: oracle.json "sampleSize", smallest n with 1 - @stdlib cdf(0; N, d, n) >= C, found by scanning.
    expect(oracle.sampleSize.length).toBeGreaterThan(20);
    for (const row of oracle.sampleSize) {
      expect(
        sampleSize({ pens: row.N, infected: row.d, confidence: row.confidence }).sampled,
        `N=${row.N} d=${row.d} C=${row.confidence}`,
      ).toBe(row.sampled);
    }
  });

  it('agrees with exact rational arithmetic, including targets met exactly', () => {
    // Oracle: BigInt binomial coefficients, no floating point: n reaches C = c/100 exactly when
    // 100 C(N-d, n) <= (100 - c) C(N, n). @stdlib misses some exact ties (N=20 d=1 n=18 gives 18/20 = 0.9
    // exactly; @stdlib's 1 - cdf(0) is 0.899999999999999), which is why this oracle is exact.
    const binom = (n: bigint, k: bigint): bigint => {
      let r = 1n;
      for (let i = 0n; i < k; i++) r = (r * (n - i)) / (i + 1n);
      return r;
    };
    const reaches = (N: number, d: number, n: number, c: number): boolean =>
      n + d > N || binom(BigInt(N - d), BigInt(n)) * 100n <= BigInt(100 - c) * binom(BigInt(N), BigInt(n));
    expect(sampleSize({ pens: 20, infected: 1, confidence: 0.9 }).sampled).toBe(18);
    const rng = seededRng(23);
    for (let k = 0; k < 300; k++) {
      const N = 2 + randomInt(rng, 150);
      const d = 1 + randomInt(rng, Math.max(1, Math.floor(N / 3)));
      const c = [50, 75, 80, 90, 95, 99][randomInt(rng, 6)]!;
      let exact = 0;
      while (!reaches(N, d, exact, c)) exact++;
      expect(sampleSize({ pens: N, infected: d, confidence: c / 100 }).sampled, `N=${N} d=${d} C=${c / 100}`).toBe(
        exact,
      );
    }
  });

  it('converts a design prevalence to pens as ceil(p N) without a floating-point extra pen', () => {
    // By hand: 0.07 * 100 and 0.14 * 50 are 7.000000000000001 in binary floating point, and a plain
    // ceil would design for 8 pens; the design is 7. (0.1 * 30 happens to round to exactly 3.)
    expect(0.07 * 100).not.toBe(7);
    expect(Math.ceil(0.14 * 50)).toBe(8);
    expect(designInfectedPens(0.07, 100)).toBe(7);
    expect(designInfectedPens(0.14, 50)).toBe(7);
    expect(designInfectedPens(0.1, 30)).toBe(3);
    // By hand: 0.071 * 100 = 7.1 -> 8; 0.001 * 30 = 0.03 -> at least 1 pen.
    expect(designInfectedPens(0.071, 100)).toBe(8);
    expect(designInfectedPens(0.001, 30)).toBe(1);
    expect(designInfectedPens(0, 30)).toBe(0);
    expect(sampleSize({ pens: 100, prevalence: 0.05, confidence: 0.95 }).sampled).toBe(45); // same as d = 5 (Cameron & Baldock 1998, exact search)
  });

  it('is minimal: the answer reaches the target and one rope fewer does not', () => {
    // Invariant (STYLE.md): minimal sample size, checked with the same detection function.
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 300 }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0.5, max: 0.999, noNaN: true }),
        fc.double({ min: 0.3, max: 1, noNaN: true }),
        (N, ud, confidence, sensitivity) => {
          const d = Math.max(1, Math.ceil(ud * N));
          const result = sampleSize({ pens: N, infected: d, confidence, sensitivity });
          const detect = detectionFor({ pens: N, infected: d, sensitivity });
          const label = `N=${N} d=${d} C=${confidence} Se=${sensitivity}`;
          if (result.reachable) {
            const n = result.sampled!;
            expect(detect(n), label).toBeGreaterThanOrEqual(confidence);
            if (n > 0) expect(detect(n - 1), label).toBeLessThan(confidence);
          } else {
            expect(result.sampled).toBeNull();
            expect(detect(N), label).toBeLessThan(confidence);
          }
        },
      ),
      { numRuns: 300, seed: 21 },
    );
  });

  it('says a target is unreachable with one infected pen and Se below the target, and how many rounds reach it', () => {
    // Follows from Cameron & Baldock 1998: with one infected pen the ceiling is Se.
    // N=40 d=1 Se=0.9 target 0.95 -> ceiling 0.90 with n = N.
    const result = sampleSize({ pens: 40, infected: 1, confidence: 0.95, sensitivity: 0.9 });
    expect(result.reachable).toBe(false);
    expect(result.sampled).toBeNull();
    expectClose(result.censusConfidence!, 0.9, { rel: 1e-12 }, 'census N=40 d=1 Se=0.9');
    // By hand: 1 - 0.1^1 = 0.9 < 0.95 <= 1 - 0.1^2 = 0.99 -> 2 rounds.
    expect(result.roundsNeeded).toBe(2);
  });

  it('reaches the target with a census when Se equals the target exactly', () => {
    // By hand: d = 1, Se = 0.9, census gives 0.9 = C: reachable with n = N = 40 (and 39 gives 0.8775).
    const result = sampleSize({ pens: 40, infected: 1, confidence: 0.9, sensitivity: 0.9 });
    expect(result.sampled).toBe(40);
  });

  it('rejects a missing or doubled design prevalence and a zero design', () => {
    expect(() => sampleSize({ pens: 40, confidence: 0.95 })).toThrow(/exactly one/);
    expect(() => sampleSize({ pens: 40, infected: 2, prevalence: 0.05, confidence: 0.95 })).toThrow(/exactly one/);
    expect(() => sampleSize({ pens: 40, infected: 0, confidence: 0.95 })).toThrow(
      '`infected` must be an integer in [1, pens], got 0',
    );
    expect(() => sampleSize({ pens: 40, infected: 41, confidence: 0.95 })).toThrow(
      '`infected` must be an integer in [1, pens], got 41',
    );
    expect(() => sampleSize({ pens: 40, infected: 1, confidence: 1.5 })).toThrow(
      '`confidence` must be a number in [0, 1], got 1.5',
    );
  });
});

describe('sample size, infinite population (binomial)', () => {
  it('matches the published binomial rows', () => {
    // Cannon & Roe 1982, Livestock disease surveys: a field manual for veterinarians (binomial form, from memory).
    const at95 = [0.01, 0.02, 0.05, 0.1, 0.2, 0.5].map(
      (p) => sampleSize({ pens: Infinity, prevalence: p, confidence: 0.95 }).sampled,
    );
    expect(at95).toEqual([299, 149, 59, 29, 14, 5]);
    // Same source: p = 0.05, C = 0.99 -> 90.
    expect(sampleSize({ pens: Infinity, prevalence: 0.05, confidence: 0.99 }).sampled).toBe(90);
  });

  it('scales with the effective prevalence p Se', () => {
    // Method 3: n depends on p Se only; by hand ln(0.05)/ln(1 - 0.045) = 65.07 -> 66.
    expect(sampleSize({ pens: Infinity, prevalence: 0.05, confidence: 0.95, sensitivity: 0.9 }).sampled).toBe(66);
  });

  it('lands on the whole number when ln(1-C)/ln(1-p) is exact in theory but not in floating point', () => {
    // By hand: p = 0.5, C = 0.75: 1 - 0.5^2 = 0.75 exactly, so n = 2 (not 3).
    expect(sampleSize({ pens: Infinity, prevalence: 0.5, confidence: 0.75 }).sampled).toBe(2);
    // By hand: p = 0.1, C = 1 - 0.9^3 = 0.271: n = 3; the quotient may round to 3.0000000000000004.
    expect(sampleSize({ pens: Infinity, prevalence: 0.1, confidence: 1 - 0.9 ** 3 }).sampled).toBe(3);
  });

  it('does not overshoot by one when the closed form rounds up past an exactly met target', () => {
    // Regression: C = 1 - 0.5^29 (met exactly by 29 ropes, by hand) gives ln(1-C)/ln(0.5) = 29.000000001
    // in floating point, and a bare ceil answers 30.
    const target = binomialDetection(0.5, 29);
    expect(Math.ceil(Math.log1p(-target) / Math.log1p(-0.5))).toBe(30);
    expect(sampleSize({ pens: Infinity, prevalence: 0.5, confidence: target }).sampled).toBe(29);
  });

  it('is minimal for any prevalence, sensitivity and target', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 1e-4, max: 1, noNaN: true }),
        fc.double({ min: 0.01, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 0.9999, noNaN: true }),
        (p, se, c) => {
          const n = sampleSize({ pens: Infinity, prevalence: p, confidence: c, sensitivity: se }).sampled!;
          expect(binomialDetection(p, n, se)).toBeGreaterThanOrEqual(c);
          if (n > 0) expect(binomialDetection(p, n - 1, se)).toBeLessThan(c);
        },
      ),
      { numRuns: 300, seed: 22 },
    );
  });

  it('refuses certainty and a number of infected pens in an infinite population', () => {
    expect(() => sampleSize({ pens: Infinity, prevalence: 0.05, confidence: 1 })).toThrow(
      '`confidence` must be a number in [0, 1), got 1',
    );
    expect(() => sampleSize({ pens: Infinity, infected: 3, confidence: 0.95 })).toThrow(/`prevalence` must be given/);
  });
});

describe('rounds to reach a target', () => {
  it('counts independent rounds with 1 - (1 - p)^k >= C', () => {
    // By hand: 1 - 0.5^k >= 0.95 -> k = 5 (0.96875; k = 4 gives 0.9375).
    expect(roundsToReach(0.95, 0.5)).toBe(5);
    // By hand: 1 - 0.1^2 = 0.99 exactly meets C = 0.99 -> 2 (float: 1 - 0.010000000000000002).
    expect(roundsToReach(0.99, 0.9)).toBe(2);
    expect(roundsToReach(0.95, 0)).toBeNull();
    expect(roundsToReach(0.95, 1)).toBe(1);
  });
});
