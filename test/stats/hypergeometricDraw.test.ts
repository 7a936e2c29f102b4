import { describe, expect, it } from 'vitest';
import hypergeometricPmf from '@stdlib/stats-base-dists-hypergeometric-pmf';
import { hypergeometricInversion } from '../../src/stats/index.js';
import { seededRng } from '../../src/util/random.js';
import { expectClose } from '../helpers/expectClose.js';

// Settings (N, K, n) of the sizes the random-rope comparison meets (a barn's pens, the infected
// pens, the ropes) and a few where the support's lower end is above 0.
const SETTINGS: readonly [number, number, number][] = [
  [80, 6, 10],
  [36, 9, 6],
  [100, 1, 25],
  [50, 40, 30],
  [20, 15, 12],
  [7, 7, 3],
  [12, 0, 5],
  [30, 10, 30],
];

describe('hypergeometric variates by inversion', () => {
  it('a stratified grid of uniforms lands on each value in proportion to the @stdlib pmf', () => {
    // Oracle: @stdlib/stats-base-dists-hypergeometric-pmf 0.3.1. Inversion maps the M points
    // (i + 0.5) / M to x exactly when F(x - 1) <= u < F(x), so each value's share of the grid is
    // its probability to within 1/M (plus the rounding of F, far below it).
    const M = 100_000;
    for (const [N, K, n] of SETTINGS) {
      const draw = hypergeometricInversion(N, K, n);
      const counts = new Map<number, number>();
      for (let i = 0; i < M; i++) {
        const x = draw((i + 0.5) / M);
        counts.set(x, (counts.get(x) ?? 0) + 1);
      }
      let total = 0;
      for (let x = 0; x <= Math.min(n, K); x++) {
        const p = hypergeometricPmf(x, N, K, n);
        total += p;
        expectClose((counts.get(x) ?? 0) / M, p, { abs: 1 / M + 1e-12 }, `share of x=${x}, N=${N} K=${K} n=${n}`);
      }
      expectClose(total, 1, { abs: 1e-12 }, `pmf sums to 1, N=${N} K=${K} n=${n}`);
      for (const x of counts.keys()) expect(hypergeometricPmf(x, N, K, n)).toBeGreaterThan(0);
    }
  });

  it('seeded draws pass a chi-square goodness-of-fit test against the @stdlib pmf', () => {
    // Pearson's chi-square statistic over cells with an expected count of at least 5 (the rest
    // pooled into their neighbour), held against the 0.999 quantile of chi-square for its degrees
    // of freedom (the table below), values recalled from memory of
    // the standard tables (e.g. Pearson E.S., Hartley H.O. (1966) Biometrika Tables for
    // Statisticians, table 8). Oracle for the expected counts: @stdlib hypergeometric pmf 0.3.1.
    const QUANTILE_999: Record<number, number> = {
      1: 10.828,
      2: 13.816,
      3: 16.266,
      4: 18.467,
      5: 20.515,
      6: 22.458,
      7: 24.322,
      8: 26.124,
      9: 27.877,
      10: 29.588,
      11: 31.264,
      12: 32.909,
    };
    const draws = 200_000;
    for (const [N, K, n, seed] of [
      [80, 6, 10, 1],
      [50, 40, 30, 2],
      [36, 9, 6, 3],
      [100, 20, 25, 4],
    ] as const) {
      const rng = seededRng(seed);
      const draw = hypergeometricInversion(N, K, n);
      const lowest = Math.max(0, n + K - N);
      const highest = Math.min(n, K);
      const observed = new Array<number>(highest - lowest + 1).fill(0);
      for (let i = 0; i < draws; i++) observed[draw(rng()) - lowest]! += 1;
      // Cells from the lowest value up, each closed once its expected count reaches 5; what is
      // left at the top joins the last cell.
      const cells: { expected: number; observed: number }[] = [];
      let cell = { expected: 0, observed: 0 };
      for (let x = lowest; x <= highest; x++) {
        cell.expected += draws * hypergeometricPmf(x, N, K, n);
        cell.observed += observed[x - lowest]!;
        if (cell.expected >= 5) {
          cells.push(cell);
          cell = { expected: 0, observed: 0 };
        }
      }
      if (cell.expected > 0 || cell.observed > 0) {
        const last = cells.at(-1)!;
        last.expected += cell.expected;
        last.observed += cell.observed;
      }
      const statistic = cells.reduce((sum, c) => sum + (c.observed - c.expected) ** 2 / c.expected, 0);
      const df = cells.length - 1;
      const critical = QUANTILE_999[df];
      expect(critical, `a tabulated quantile for ${df} df (N=${N} K=${K} n=${n})`).toBeDefined();
      expect(statistic, `chi-square, ${df} df, N=${N} K=${K} n=${n} seed ${seed}`).toBeLessThan(critical!);
    }
  });

  it('is non-decreasing in u and stays in the support at its ends', () => {
    // By construction of inversion (Devroye 1986, Non-Uniform Random Variate Generation, section II.2).
    for (const [N, K, n] of SETTINGS) {
      const draw = hypergeometricInversion(N, K, n);
      let previous = draw(0);
      expect(previous).toBe(Math.max(0, n + K - N));
      for (let i = 1; i < 1000; i++) {
        const x = draw(i / 1000);
        expect(x).toBeGreaterThanOrEqual(previous);
        previous = x;
      }
      expect(draw(1 - 2 ** -32)).toBe(Math.min(n, K));
    }
  });

  it('refuses a count outside its range', () => {
    expect(() => hypergeometricInversion(10, 11, 3)).toThrow(/`marked` must be an integer in \[0, 10\], got 11/);
    expect(() => hypergeometricInversion(10, 3, -1)).toThrow(/`drawn` must be an integer in \[0, 10\], got -1/);
    expect(() => hypergeometricInversion(2.5, 1, 1)).toThrow(RangeError);
  });
});
