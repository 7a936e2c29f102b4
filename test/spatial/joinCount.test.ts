import { describe, expect, it } from 'vitest';
import { seededRng } from '../../src/util/random.js';
import { shuffleInPlace } from '../helpers/shuffle.js';
import {
  joinCountMoments,
  joinCountTest,
  joinCounts,
  stratifiedJoinCountMoments,
} from '../../src/spatial/joinCount.js';
import { knnWeights, weightConstants, weightsFromEdges, type SpatialWeights } from '../../src/spatial/weights.js';
import { expectClose } from '../helpers/expectClose.js';

const row6 = knnWeights(
  [0, 1, 2, 3, 4, 5].map((x) => ({ id: `P${x + 1}`, x, y: 0 })),
  1,
  'binary',
);

/** Rook (or queen) lattice of r x c cells numbered row by row. */
function lattice(r: number, c: number, queen = false, style: 'binary' | 'row' = 'binary'): SpatialWeights {
  const ids = Array.from({ length: r * c }, (_, i) => `c${i}`);
  const edges: [number, number][] = [];
  for (let i = 0; i < r; i++) {
    for (let j = 0; j < c; j++) {
      const k = i * c + j;
      if (j + 1 < c) edges.push([k, k + 1]);
      if (i + 1 < r) edges.push([k, k + c]);
      if (queen && i + 1 < r && j + 1 < c) edges.push([k, k + c + 1]);
      if (queen && i + 1 < r && j > 0) edges.push([k, k + c - 1]);
    }
  }
  return weightsFromEdges(ids, edges, style, 'lattice');
}

/** All subsets of {0..n-1} of size k. */
function* subsets(n: number, k: number, start = 0, acc: number[] = []): Generator<number[]> {
  if (acc.length === k) {
    yield acc;
    return;
  }
  for (let i = start; i <= n - (k - acc.length); i++) yield* subsets(n, k, i + 1, [...acc, i]);
}

function labels(n: number, positives: readonly number[]): boolean[] {
  const out = new Array<boolean>(n).fill(false);
  for (const i of positives) out[i] = true;
  return out;
}

describe('join counts', () => {
  it('counts BB=1, BW=2, WW=2 on a row of six pens with positives at pens 2 and 3', () => {
    // By hand (Cliff & Ord 1981, Spatial Processes): fence joins 1-2, 2-3, 3-4, 4-5, 5-6.
    const jc = joinCounts(row6, labels(6, [1, 2]));
    expect(jc).toEqual({ bb: 1, bw: 2, ww: 2, joins: 5 });
  });

  it('gives E(BB)=1/3, Var(BB)=2/9 and exact P(BB>=1)=5/15 under non-free sampling for that row', () => {
    // Cliff & Ord 1981, Spatial Processes (non-free sampling moments). By hand: E = 1/2 S0 n1(n1-1)/(n(n-1)) = 1/2 * 10 * 2/30 = 1/3;
    // with n1 = 2 only the S1 term survives: Var = 1/4 * 20 * 2/30 - 1/9 = 1/3 - 1/9 = 2/9.
    // BB >= 1 exactly when the two positives share a fence: 5 adjacent pairs of C(6,2) = 15 placements.
    const t = joinCountTest(row6, labels(6, [1, 2]), { rng: seededRng(1), permutations: 99 });
    expectClose(t.expectedBB, 1 / 3, { rel: 1e-12 }, 'E(BB) row of 6, n1=2');
    expectClose(t.varianceBB, 2 / 9, { rel: 1e-12 }, 'Var(BB) row of 6, n1=2');
    expectClose(t.pPermutation, 5 / 15, { rel: 1e-12 }, 'exact P(BB>=1) row of 6, n1=2');
    expect(t.inference).toMatchObject({ method: 'exact', placements: 15 });
    expectClose(t.zBB!, (1 - 1 / 3) / Math.sqrt(2 / 9), { rel: 1e-12 }, 'z = (BB - E)/sd');
  });

  it('gives BB=10, BW=4, WW=10, E(BB)=5.6 and exact P(BB>=10)=22/12870 on a 4x4 rook lattice with cells 8-15 positive', () => {
    // Cliff & Ord 1981, Spatial Processes (non-free sampling moments); exact p by enumeration of the C(16,8) = 12870 placements.
    const w = lattice(4, 4);
    const positive = labels(16, [8, 9, 10, 11, 12, 13, 14, 15]);
    const t = joinCountTest(w, positive, { rng: seededRng(1), permutations: 99 });
    expect([t.bb, t.bw, t.ww]).toEqual([10, 4, 10]);
    expectClose(t.expectedBB, 5.6, { rel: 1e-12 }, 'E(BB) 4x4 rook n1=8');
    expectClose(t.pPermutation, 22 / 12870, { rel: 1e-12 }, 'exact P(BB>=10) 4x4 rook n1=8');
    expect(t.inference.method).toBe('exact');
  });

  it('matches brute-force moments over every placement on a 3x3 lattice (rook, queen, row-standardised)', () => {
    // Exhaustive enumeration (STYLE.md): mean and variance of BB over all C(9, n1) placements
    // are the non-free moments, for every n1 and for general (row-standardised) weights too.
    for (const w of [lattice(3, 3), lattice(3, 3, true), lattice(3, 3, false, 'row')]) {
      for (let n1 = 0; n1 <= 9; n1++) {
        let sum = 0;
        let sumSq = 0;
        let count = 0;
        for (const s of subsets(9, n1)) {
          const bb = joinCounts(w, labels(9, s)).bb;
          sum += bb;
          sumSq += bb * bb;
          count++;
        }
        const mean = sum / count;
        const variance = sumSq / count - mean * mean;
        const m = joinCountMoments(w, n1);
        expectClose(m.expectedBB, mean, { rel: 1e-12, abs: 1e-12 }, `E(BB) 3x3 ${w.style} n1=${n1}`);
        expectClose(m.varianceBB, variance, { rel: 1e-9, abs: 1e-12 }, `Var(BB) 3x3 ${w.style} n1=${n1}`);
      }
    }
  });

  it('matches brute-force moments when positives are permuted within strata with joins across strata', () => {
    // Exhaustive enumeration over C(3,1) x C(6,3) placements: row 0 of a 3x3 queen lattice is one stratum.
    const w = lattice(3, 3, true);
    const strata = [0, 0, 0, 1, 1, 1, 1, 1, 1];
    const positive = labels(9, [0, 3, 4, 8]);
    let sum = 0;
    let sumSq = 0;
    let count = 0;
    for (const a of subsets(3, 1)) {
      for (const b of subsets(6, 3)) {
        const bb = joinCounts(w, labels(9, [...a, ...b.map((i) => i + 3)])).bb;
        sum += bb;
        sumSq += bb * bb;
        count++;
      }
    }
    const m = stratifiedJoinCountMoments(w, strata, positive);
    expectClose(m.expectedBB, sum / count, { rel: 1e-12 }, 'stratified E(BB)');
    expectClose(m.varianceBB, sumSq / count - (sum / count) ** 2, { rel: 1e-9 }, 'stratified Var(BB)');
    // One stratum reduces to the Cliff & Ord non-free moments.
    const single = stratifiedJoinCountMoments(w, new Array(9).fill(0), positive);
    const cliffOrd = joinCountMoments(w, 4);
    expectClose(single.varianceBB, cliffOrd.varianceBB, { rel: 1e-9 }, 'one stratum = non-free');
    const t = joinCountTest(w, positive, { rng: seededRng(3), permutations: 99, strata });
    expect(t.inference).toMatchObject({ method: 'exact', placements: 60, stratified: true });
  });

  it('adds up BB + BW + WW to all joins for any labelling', () => {
    // Identity: every join is BB, BW or WW; S0/2 joins (Cliff & Ord 1981).
    const w = lattice(4, 5, true, 'row');
    const rng = seededRng(11);
    for (let t = 0; t < 50; t++) {
      const positive = Array.from({ length: 20 }, () => rng() < 0.4);
      const jc = joinCounts(w, positive);
      expectClose(jc.bb + jc.bw + jc.ww, weightConstants(w).s0 / 2, { rel: 1e-12 }, `labelling ${t}`);
    }
  });

  it('uses Monte Carlo (1+b)/(1+m) when placements exceed the exact limit, close to the exact p', () => {
    // Same 4x4 case, forced to Monte Carlo: p must be a multiple of 1/(m+1), never 0, near 22/12870.
    const w = lattice(4, 4);
    const positive = labels(16, [0, 1, 2, 4, 5, 6, 13, 15]);
    const exact = joinCountTest(w, positive, { rng: seededRng(1), permutations: 1 });
    const mc = joinCountTest(w, positive, { rng: seededRng(1), permutations: 9999, exactLimit: 100 });
    expect(mc.inference).toMatchObject({ method: 'monte-carlo', permutations: 9999 });
    expectClose(mc.pPermutation * 10000, Math.round(mc.pPermutation * 10000), { abs: 1e-6 }, 'p is (1+b)/(1+m)');
    expect(mc.pPermutation).toBeGreaterThan(0);
    const se = Math.sqrt((exact.pPermutation * (1 - exact.pPermutation)) / 9999);
    expectClose(mc.pPermutation, exact.pPermutation, { abs: 4 * se + 1 / 10000 }, 'Monte Carlo vs exact p');
  });

  it('reports a null z-score when the variance is zero (no positives or all positive)', () => {
    for (const positive of [labels(6, []), labels(6, [0, 1, 2, 3, 4, 5])]) {
      const t = joinCountTest(row6, positive, { rng: seededRng(1), permutations: 9 });
      expect(t.varianceBB).toBe(0);
      expect(t.zBB).toBeNull();
      expect(t.pPermutation).toBe(1);
    }
  });

  it('gives a large positive z for clustered positives and a negative one for a checkerboard', () => {
    // Property (Cliff & Ord 1981): like-with-like raises BB above expectation; alternation lowers it.
    const w = lattice(6, 6);
    const block = labels(
      36,
      Array.from({ length: 36 }, (_, i) => i).filter((i) => i % 6 < 3),
    );
    const checker = labels(
      36,
      Array.from({ length: 36 }, (_, i) => i).filter((i) => (Math.floor(i / 6) + (i % 6)) % 2 === 0),
    );
    const a = joinCountTest(w, block, { rng: seededRng(5), permutations: 199 });
    const b = joinCountTest(w, checker, { rng: seededRng(5), permutations: 199 });
    expect(a.zBB!).toBeGreaterThan(4);
    // No permutation of 18 positives on 36 cells beats a half-and-half block, so b = 0: p = 1/200.
    expectClose(a.pPermutation, 1 / 200, { rel: 1e-12 }, 'p of the block pattern');
    expect(b.zBB!).toBeLessThan(-4);
    expect(b.pPermutation).toBe(1);
  });

  it('keeps permutation p-values valid under random labelling: P(p <= a) stays near or below a', () => {
    // Coarse check of validity (Besag & Clifford 1989): under the null a valid test has
    // P(p <= a) <= a. BB takes few values, so ties make p conservative (at most a, often well below);
    // 300 labellings at a fixed seed, slack of about 3 binomial standard errors.
    const w = lattice(4, 5);
    const rng = seededRng(2024);
    const levels = [0.05, 0.1, 0.25, 0.5];
    const hits = levels.map(() => 0);
    const runs = 300;
    for (let r = 0; r < runs; r++) {
      const order = shuffleInPlace(
        Array.from({ length: 20 }, (_, i) => i),
        rng,
      );
      const t = joinCountTest(w, labels(20, order.slice(0, 5)), { rng, permutations: 199, exactLimit: 10 });
      levels.forEach((a, k) => {
        if (t.pPermutation <= a) hits[k]!++;
      });
    }
    levels.forEach((a, k) => expect(hits[k]! / runs).toBeLessThan(a + 3 * Math.sqrt((a * (1 - a)) / runs)));
    // Not degenerate either: some labellings reach each level above the smallest.
    expect(hits[3]!).toBeGreaterThan(0.15 * runs);
  });

  it('rejects labels that do not match the pens', () => {
    expect(() => joinCountTest(row6, [true], { rng: seededRng(1), permutations: 9 })).toThrow(RangeError);
    expect(() => joinCountTest(row6, labels(6, [1]), { rng: seededRng(1), permutations: 0 })).toThrow(/permutations/);
  });

  it('gives the same Monte Carlo p when the generator is called once per draw as when it fills draws in bulk', () => {
    // fillUniform's contract (src/util/random.ts): the same numbers in the same order as that many calls.
    const w = lattice(4, 4);
    const positive = labels(16, [0, 1, 2, 4, 5, 6, 13, 15]);
    const inner = seededRng(3);
    const perCall = joinCountTest(w, positive, { rng: () => inner(), permutations: 999, exactLimit: 100 });
    const bulk = joinCountTest(w, positive, { rng: seededRng(3), permutations: 999, exactLimit: 100 });
    expect(bulk.inference.method).toBe('monte-carlo');
    expect(bulk.pPermutation).toBe(perCall.pPermutation);
  });
});

describe('stratified join counts without joins between strata', () => {
  it('match brute force over C(4,2) x C(5,2) placements for two separate blocks', () => {
    // Exhaustive enumeration: a row of 4 and a row of 5 (fence joins), positives permuted within rows.
    const ids = Array.from({ length: 9 }, (_, i) => `p${i}`);
    const w = weightsFromEdges(
      ids,
      [
        [0, 1],
        [1, 2],
        [2, 3],
        [4, 5],
        [5, 6],
        [6, 7],
        [7, 8],
      ],
      'row',
      'two rows',
    );
    const strata = [0, 0, 0, 0, 1, 1, 1, 1, 1];
    const positive = labels(9, [0, 1, 6, 8]);
    let sum = 0;
    let sumSq = 0;
    let count = 0;
    for (const a of subsets(4, 2))
      for (const b of subsets(5, 2)) {
        const bb = joinCounts(w, labels(9, [...a, ...b.map((i) => i + 4)])).bb;
        sum += bb;
        sumSq += bb * bb;
        count++;
      }
    const m = stratifiedJoinCountMoments(w, strata, positive);
    expectClose(m.expectedBB, sum / count, { rel: 1e-12 }, 'block E(BB)');
    expectClose(m.varianceBB, sumSq / count - (sum / count) ** 2, { rel: 1e-9 }, 'block Var(BB)');
  });
});
