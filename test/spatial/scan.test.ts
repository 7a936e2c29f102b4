import { describe, expect, it } from 'vitest';
import { seededRng, type Rng } from '../../src/util/random.js';
import { bernoulliScan, scanWindows } from '../../src/spatial/scan.js';
import { expectClose } from '../helpers/expectClose.js';

const row6 = [0, 1, 2, 3, 4, 5].map((x) => ({ id: `P${x + 1}`, x, y: 0 }));

describe('Bernoulli spatial scan', () => {
  it('finds the hand-derived most likely cluster and LLR for a row of six with positives at pens 2 and 3', () => {
    // Kulldorff 1997, Bernoulli LLR, by hand: N = 6, C = 2, windows up to 3 pens. Window {1,2,3}:
    // c = 2 of 3 inside, 0 of 3 outside: LLR = [2 ln(2/3) + ln(1/3)] - [2 ln(1/3) + 4 ln(2/3)] = ln 3 + 2 ln 1.5.
    // Permutation null, by hand: a placement reaches that LLR when its two positives are at most
    // 2 pens apart (5 adjacent + 4 two apart = 9 of C(6,2) = 15); otherwise the best is a
    // one-pen window, LLR 1.317 < 1.910. So p -> 9/15 = 0.6.
    const s = bernoulliScan(row6, [false, true, true, false, false, false], { rng: seededRng(42), permutations: 9999 });
    // Windows {1,2,3} (centre P1 or P2) and {2,3,4} (centre P3) tie; the smallest centre index wins.
    expect(s.mostLikely!.pens).toEqual(['P1', 'P2', 'P3']);
    expect(s.mostLikely!.centre).toBe('P1');
    expectClose(s.mostLikely!.llr, Math.log(3) + 2 * Math.log(1.5), { rel: 1e-12 }, 'LLR window {1,2,3}');
    const se = Math.sqrt((0.6 * 0.4) / 9999);
    expectClose(s.mostLikely!.p, 0.6, { abs: 4 * se }, 'Monte Carlo p vs exact 9/15');
  });

  it('only cuts windows at complete circles, up to half the pens', () => {
    // Centre P2 of the row: distances 0, 1, 1, 2, ... so windows hold 1 or 3 pens, never 2.
    const w = scanWindows(row6, 3);
    expect([...w.sizes[1]!]).toEqual([1, 3]);
    expect([...w.sizes[0]!]).toEqual([1, 2, 3]);
  });

  it('finds a planted cluster in a 2 x 20 barn and lists a non-overlapping secondary cluster', () => {
    // Property: a block of 8 positive pens among 40 with 2 stray positives is the most likely cluster.
    const pens = [];
    for (let row = 0; row < 2; row++)
      for (let p = 0; p < 20; p++) pens.push({ id: `${row ? 'B' : 'A'}${p + 1}`, x: p + 0.5, y: row ? 2 : 0.5 });
    const planted = new Set(['A5', 'A6', 'A7', 'A8', 'B5', 'B6', 'B7', 'B8']);
    const positive = pens.map((p) => planted.has(p.id) || p.id === 'A18' || p.id === 'B19');
    const s = bernoulliScan(pens, positive, { rng: seededRng(7), permutations: 999 });
    // Circles centred on pens cannot cut out a 4 x 2 rectangle exactly (from A6 the pens A4 and A8
    // are both 2 away), so the best window is the largest all-positive circle inside the block.
    expect(s.mostLikely!.pens.every((id) => planted.has(id))).toBe(true);
    expect(s.mostLikely!.pens.length).toBeGreaterThanOrEqual(6);
    expect(s.mostLikely!.p).toBeLessThan(0.01);
    // Secondary clusters share no pen with the most likely cluster or with each other.
    const used = new Set(s.mostLikely!.pens);
    for (const c of s.secondary) {
      expect(c.pens.some((id) => used.has(id))).toBe(false);
      for (const id of c.pens) used.add(id);
      expect(c.llr).toBeLessThanOrEqual(s.mostLikely!.llr);
    }
    expect(s.secondary.length).toBeGreaterThan(0);
  });

  it('reports no cluster when no pen or every pen is positive', () => {
    for (const flag of [false, true]) {
      const s = bernoulliScan(
        row6,
        row6.map(() => flag),
        { rng: seededRng(1), permutations: 9 },
      );
      expect(s.mostLikely).toBeNull();
    }
  });

  it('gives the same result for the same seed', () => {
    const positive = [true, false, true, true, false, false];
    const a = bernoulliScan(row6, positive, { rng: seededRng(5), permutations: 199 });
    const b = bernoulliScan(row6, positive, { rng: seededRng(5), permutations: 199 });
    expect(a).toEqual(b);
  });

  it('gives the p-values of the plain replicate loop (one draw per call, every maximum computed) for the same seed', () => {
    // The reference is Kulldorff's (1997) Monte Carlo step written out: per replicate, place the C
    // positives by a partial Fisher-Yates shuffle drawing rng() once per positive, then take the
    // largest Bernoulli LLR over the same circular windows. The kernel keeps each placement's
    // maximum when placements are few (one or two positives) and draws in bulk: same numbers.
    const pens: { id: string; x: number; y: number }[] = [];
    for (let row = 0; row < 2; row++)
      for (let p = 0; p < 20; p++) pens.push({ id: `${row ? 'B' : 'A'}${p + 1}`, x: p + 0.5, y: row ? 2 : 0.5 });
    const positiveAt = (ids: string[]) => pens.map((pen) => ids.includes(pen.id));
    for (const ids of [['A3'], ['A3', 'A4'], ['A3', 'A4', 'B4', 'A9', 'B15', 'A17', 'B1', 'B2', 'A12', 'A13']]) {
      const positive = positiveAt(ids);
      const scan = bernoulliScan(pens, positive, { rng: seededRng(17), permutations: 499 });
      const reference = plainScanP(pens, positive, 499, seededRng(17));
      const listed = [scan.mostLikely!, ...scan.secondary];
      expect(listed.length, `${ids.length} positives`).toBeGreaterThan(0);
      for (const cluster of listed)
        expect(cluster.p, `${ids.length} positives, llr ${cluster.llr}`).toBe(reference(cluster.llr));
    }
  });
});

/** The Monte Carlo p of an LLR by the plain loop (see the test above that uses it). */
function plainScanP(
  points: { id: string; x: number; y: number }[],
  positive: boolean[],
  permutations: number,
  rng: Rng,
): (llr: number) => number {
  const n = points.length;
  const windows = scanWindows(points, Math.floor(n / 2));
  const C = positive.filter(Boolean).length;
  const xlogx = (k: number) => (k === 0 ? 0 : k * Math.log(k));
  const llr = (c: number, m: number) =>
    c * (n - m) <= (C - c) * m
      ? 0
      : xlogx(c) +
        xlogx(m - c) -
        xlogx(m) +
        xlogx(C - c) +
        xlogx(n - m - C + c) -
        xlogx(n - m) -
        (xlogx(C) + xlogx(n - C) - xlogx(n));
  const pool = Array.from({ length: n }, (_, i) => i);
  const maxima: number[] = [];
  for (let m = 0; m < permutations; m++) {
    const label = new Array<number>(n).fill(0);
    for (let k = 0; k < C; k++) {
      const r = k + Math.floor(rng() * (n - k));
      [pool[k], pool[r]] = [pool[r]!, pool[k]!];
      label[pool[k]!] = 1;
    }
    let best = 0;
    for (let c0 = 0; c0 < n; c0++)
      for (const size of windows.sizes[c0]!) {
        let c = 0;
        for (let at = 0; at < size; at++) c += label[windows.order[c0]![at]!]!;
        best = Math.max(best, llr(c, size));
      }
    maxima.push(best);
  }
  return (observed) => {
    const threshold = observed - 1e-9 * Math.max(1, observed);
    return (1 + maxima.filter((v) => v >= threshold).length) / (1 + permutations);
  };
}
