import hypergeometricCdf from '@stdlib/stats-base-dists-hypergeometric-cdf';
import { describe, expect, it } from 'vitest';
import { allocateRopesBalanced, smallestRopes, smallestRopesConservative } from '../../src/plan/index.js';
import { unreachableText } from '../../src/report/barnPlanNotes.js';
import { barnTargetForSite, roundsToReach } from '../../src/stats/index.js';
import { expectClose } from '../helpers/expectClose.js';
import { hypergeometricDetect, imperfectDetect } from './helpers.js';

describe('local detection helper (the model fed to the planner in tests)', () => {
  it('matches the published check values and the @stdlib hypergeometric distribution', () => {
    // Cameron & Baldock 1998, Prev Vet Med 34:1-17 (hypergeometric form); the N=40 row by hand.
    expectClose(hypergeometricDetect(36, 1, 6), 1 / 6, { rel: 1e-12 }, 'check: N=36 d=1 n=6');
    expectClose(hypergeometricDetect(36, 9, 6), 0.848028, { abs: 5e-7 }, 'check: N=36 d=9 n=6');
    expectClose(hypergeometricDetect(40, 2, 10), 1 - 870 / 1560, { rel: 1e-12 }, 'check (by hand): N=40 d=2 n=10');
    // Cameron & Baldock 1998, Prev Vet Med 34:1-17.
    expectClose(imperfectDetect(36, 9, 6, 0.9), 0.807354, { abs: 5e-7 }, 'check: N=36 d=9 n=6 Se=0.9');
    expectClose(imperfectDetect(40, 4, 10, 0.9), 0.653525, { abs: 5e-7 }, 'check: N=40 d=4 n=10 Se=0.9');
    // Oracle: P(X = 0) = cdf(0; N, K=d, n) of @stdlib's hypergeometric.
    for (const [N, d, n] of [
      [36, 9, 6],
      [100, 5, 45],
      [20, 3, 7],
    ] as const) {
      expectClose(
        hypergeometricDetect(N, d, n),
        1 - hypergeometricCdf(0, N, d, n),
        { rel: 1e-12 },
        `@stdlib oracle N=${N} d=${d} n=${n}`,
      );
    }
  });
});

describe('smallest rope count for a target', () => {
  it('finds the finite-population sample sizes of the classic tables, one rope fewer falling short', () => {
    // Cameron & Baldock 1998 (exact search); MacDiarmid 1988 gives an approximation (from memory).
    for (const [N, d, expected] of [
      [100, 5, 45],
      [100, 10, 25],
    ] as const) {
      const detect = (n: number) => hypergeometricDetect(N, d, n);
      const result = smallestRopes(detect, 0.95, N);
      expect(result).toMatchObject({ reachable: true, ropes: expected });
      expect(detect(expected)).toBeGreaterThanOrEqual(0.95);
      expect(detect(expected - 1)).toBeLessThan(0.95);
    }
  });

  it('finds half the pens for a 50% chance of hitting the one infected pen', () => {
    // By hand: N = 36, d = 1, perfect test: P = n / 36 >= 0.5 first at n = 18 (method 1).
    expect(smallestRopes((n) => 1 - (36 - n) / 36, 0.5, 36)).toMatchObject({ reachable: true, ropes: 18 });
  });

  it('finds the binomial sample sizes 299, 149, 59, 29, 14, 5 at 95% confidence', () => {
    // Cannon & Roe 1982, Livestock disease surveys: a field manual for veterinarians (binomial form, from memory).
    const cases = [
      [0.01, 299],
      [0.02, 149],
      [0.05, 59],
      [0.1, 29],
      [0.2, 14],
      [0.5, 5],
    ] as const;
    for (const [p, expected] of cases) {
      const result = smallestRopes((n) => 1 - (1 - p) ** n, 0.95, 10_000);
      expect(result, `p=${p}`).toMatchObject({ reachable: true, ropes: expected });
    }
  });

  it('reports an unreachable target with the ceiling and the rounds that would reach it', () => {
    // Follows from Cameron & Baldock 1998: with one infected pen the ceiling is Se.
    // N=40, d=1, Se=0.9, target 0.95 -> ceiling 0.90 with n = N;
    // 1 - 0.1^2 = 0.99 >= 0.95 > 0.90, so 2 rounds (by hand).
    const result = smallestRopes((n) => imperfectDetect(40, 1, n, 0.9), 0.95, 40);
    expect(result.reachable).toBe(false);
    if (result.reachable) return;
    expectClose(result.ceiling, 0.9, { rel: 1e-12 }, 'N=40 d=1 Se=0.9 n=40 ceiling');
    expect(result.roundsNeeded).toBe(2);
    expect(unreachableText(result)).toMatch(/90\.0%.*2 negative rounds.*99\.0%/);
    expect(smallestRopes(() => 0, 0.95, 10)).toMatchObject({ reachable: false, ceiling: 0, roundsNeeded: null });
  });

  it('counts rounds exactly at a decimal boundary where floating point rounds down', () => {
    // By hand: 1 - 0.31^2 = 1 - 0.0961 = 0.9039 exactly, but -expm1(2 log1p(-0.69)) evaluates
    // to 0.9038999999999999 in binary floating point: two rounds, not three.
    expect(roundsToReach(0.9039, 0.69)).toBe(2);
    expect(roundsToReach(0.99, 0.9)).toBe(2); // 1 - 0.1^2 = 0.99 (by hand)
    expect(roundsToReach(0.95, 0.5)).toBe(5); // 1 - 0.5^4 = 0.9375 < 0.95 <= 1 - 0.5^5 = 0.96875
    expect(() => roundsToReach(0.95, 1.2)).toThrow('`perRound` must be a number in [0, 1], got 1.2');
  });
});

describe('site sizing and budget allocation', () => {
  it('gives the barn-level target 1 - (1 - C)^(1/k) and the site value of three similar barns', () => {
    // By hand: 0.05^(1/3) = 0.368403, so 0.631597 (Martin, Cameron & Greiner 2007, Prev Vet Med 79:71-97).
    expectClose(barnTargetForSite(0.95, 3), 1 - 0.05 ** (1 / 3), { rel: 1e-14 }, 'C=0.95 k=3');
    expectClose(barnTargetForSite(0.95, 3), 0.631597, { abs: 5e-7 }, 'C=0.95 k=3 (6 digits)');
    // Martin, Cameron & Greiner 2007, Prev Vet Med 79:71-97: three similar barns at p = 0.85 each -> 0.996625.
    const barns = ['B1', 'B2', 'B3'].map((barnId) => ({
      barnId,
      maxRopes: 1,
      detect: (n: number) => (n >= 1 ? 0.85 : 0),
    }));
    expectClose(allocateRopesBalanced(barns, 3).siteDetection, 0.996625, { abs: 5e-7 }, 'three barns at 0.85');
  });

  it('rejects a budget that is not a whole number of ropes', () => {
    expect(() => allocateRopesBalanced([], 2.5)).toThrow('`budget` must be an integer in [0, infinity), got 2.5');
  });
});

describe('smallestRopesConservative (a Monte Carlo estimate less a margin of standard errors)', () => {
  // Hand table: p(n) = n / 10, SE(n) = 0.01 for every n. Target 0.5: the point estimate reaches
  // it at n = 5; with two standard errors 0.5 - 0.02 falls short, 0.6 - 0.02 = 0.58 reaches (by hand).
  const estimate = (n: number) => ({ p: n / 10, standardError: 0.01 });
  it('asks the estimate less `margin` standard errors to reach the target', () => {
    expect(smallestRopesConservative(estimate, 0.5, 10, 0).ropes).toBe(5); // by hand
    expect(smallestRopesConservative(estimate, 0.5, 10).ropes).toBe(6); // by hand: margin 2 by default
    expect(smallestRopesConservative(estimate, 0.5, 10).estimate).toEqual({ p: 0.6, standardError: 0.01 });
  });
  it('says null when even every rope falls short, and scans past a dip (an estimate need not be monotone)', () => {
    expect(smallestRopesConservative(estimate, 0.99, 10).ropes).toBeNull(); // 1 - 0.02 < 0.99, by hand
    const dip = (n: number) => ({ p: [0, 0.2, 0.97, 0.5, 0.99][n]!, standardError: 0 });
    expect(smallestRopesConservative(dip, 0.95, 4).ropes).toBe(2); // the first n reaching it, by hand
  });
  it('refuses an estimate outside [0, 1] and a negative margin', () => {
    expect(() => smallestRopesConservative(() => ({ p: 1.2, standardError: 0 }), 0.5, 3)).toThrow(RangeError);
    expect(() => smallestRopesConservative(estimate, 0.5, 3, -1)).toThrow(/margin/);
  });
});
