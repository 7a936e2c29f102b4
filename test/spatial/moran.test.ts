import { describe, expect, it } from 'vitest';
import { featureCollection, point } from '@turf/helpers';
import { moranIndex } from '@turf/moran-index';
import { seededRng } from '../../src/util/random.js';
import { shuffleInPlace } from '../helpers/shuffle.js';
import { moranTest } from '../../src/spatial/moran.js';
import { distanceBandWeights, knnWeights, weightsFromEdges, type SpatialWeights } from '../../src/spatial/weights.js';
import { expectClose } from '../helpers/expectClose.js';

const row6Points = [0, 1, 2, 3, 4, 5].map((x) => ({ id: `P${x + 1}`, x, y: 0 }));
const row6 = knnWeights(row6Points, 1, 'binary');
const x6 = [0, 1, 1, 0, 0, 0];

function permutations<T>(items: T[]): T[][] {
  if (items.length <= 1) return [items];
  return items.flatMap((item, i) =>
    permutations([...items.slice(0, i), ...items.slice(i + 1)]).map((rest) => [item, ...rest]),
  );
}

function grid(r: number, c: number): SpatialWeights {
  const edges: [number, number][] = [];
  for (let i = 0; i < r; i++)
    for (let j = 0; j < c; j++) {
      if (j + 1 < c) edges.push([i * c + j, i * c + j + 1]);
      if (i + 1 < r) edges.push([i * c + j, (i + 1) * c + j]);
    }
  return weightsFromEdges(
    Array.from({ length: r * c }, (_, i) => `g${i}`),
    edges,
    'binary',
    'grid',
  );
}

describe("Moran's I", () => {
  it('gives I = 0.2 and Var_normality = 0.128 for x = (0,1,1,0,0,0) on a fence row of six', () => {
    // Moran 1950; Cliff & Ord 1981 (moments), by hand: z = x - 1/3, sum z^2 = 4/3, sum_ij w z z = 4/9,
    // I = (6/10)(4/9)/(4/3) = 0.2; Var_N = (36*20 - 6*72 + 3*100)/(35*100) - 1/25 = 0.168 - 0.04 = 0.128.
    const m = moranTest(row6, x6, { rng: seededRng(1), permutations: 0 });
    expectClose(m.I!, 0.2, { rel: 1e-12 }, 'I row of 6');
    expectClose(m.varianceNormality!, 0.128, { rel: 1e-12 }, 'Var_N row of 6');
    expectClose(m.expected, -0.2, { rel: 1e-12 }, 'E[I] = -1/(n-1), n = 6');
  });

  it('has E[I] = -1/(n-1) and the randomisation variance equal to the variance over all permutations', () => {
    // Moran 1950 (E[I]) and Cliff & Ord 1981 (Var_R is the exact permutation variance): brute force
    // over all 6! = 720 orderings of distinct loads on the row of six.
    const loads = [3.5, 0, 12, 7.25, 1, 20];
    const m = moranTest(row6, loads, { rng: seededRng(1), permutations: 0 });
    const values = permutations(loads).map((p) => moranTest(row6, p, { rng: seededRng(1), permutations: 0 }).I!);
    const mean = values.reduce((s, v) => s + v, 0) / values.length;
    const variance = values.reduce((s, v) => s + (v - mean) ** 2, 0) / values.length;
    expectClose(mean, -1 / 5, { rel: 1e-12 }, 'mean of I over permutations');
    expectClose(m.varianceRandomisation!, variance, { rel: 1e-9 }, 'Var_R = permutation variance');
    expectClose(m.zRandomisation!, (m.I! + 0.2) / Math.sqrt(variance), { rel: 1e-9 }, 'z under randomisation');
  });

  it('agrees with @turf/moran-index on binary distance-band weights (not standardised)', () => {
    // Oracle: @turf/moran-index builds weights with @turf/distance-weight; binary: true and
    // threshold 1 on unit-spaced points give exactly the fence weights of the row.
    const fc = featureCollection(row6Points.map((p, i) => point([p.x, p.y], { v: x6[i] })));
    const t = moranIndex(fc, { inputField: 'v', binary: true, threshold: 1, standardization: false });
    const m = moranTest(row6, x6, { rng: seededRng(1), permutations: 0 });
    expectClose(m.I!, t.moranIndex, { rel: 1e-12 }, 'I vs turf, binary');
    expectClose(m.varianceNormality!, t.stdNorm ** 2, { rel: 1e-12 }, 'Var_N vs turf, binary');
    expectClose(m.zNormality!, t.zNorm, { rel: 1e-12 }, 'z_N vs turf, binary');
  });

  it('agrees with @turf/moran-index on row-standardised inverse-distance weights', () => {
    // Oracle: turf default alpha -1 (weight d^-1), threshold 1e5 (all pairs), row standardisation;
    // the same weights here are distanceBandWeights(band 1e5, power 1, row).
    const pts = [
      { id: 'a', x: 0, y: 0 },
      { id: 'b', x: 1.5, y: 0.2 },
      { id: 'c', x: 3, y: 1 },
      { id: 'd', x: 0.5, y: 2 },
      { id: 'e', x: 4, y: 2.5 },
      { id: 'f', x: 2, y: 3 },
      { id: 'g', x: 5, y: 0.5 },
    ];
    const v = [10, 8.5, 2, 9, 0, 4, 0];
    const fc = featureCollection(pts.map((p, i) => point([p.x, p.y], { v: v[i] })));
    const t = moranIndex(fc, { inputField: 'v' });
    const w = distanceBandWeights(pts, 1e5, 'row', 1);
    const m = moranTest(w, v, { rng: seededRng(1), permutations: 0 });
    expectClose(m.I!, t.moranIndex, { rel: 1e-10 }, 'I vs turf, inverse distance row');
    expectClose(m.varianceNormality!, t.stdNorm ** 2, { rel: 1e-10 }, 'Var_N vs turf, inverse distance row');
    expectClose(m.expected, t.expectedMoranIndex, { rel: 1e-12 }, 'E[I] vs turf');
  });

  it('is unchanged when pens are relabelled or loads rescaled', () => {
    // Metamorphic (STYLE.md): I depends on the arrangement, not on pen order or the unit of load.
    const w = grid(4, 5);
    const rng = seededRng(9);
    const loads = Array.from({ length: 20 }, () => (rng() < 0.4 ? 10 * rng() : 0));
    const base = moranTest(w, loads, { rng: seededRng(1), permutations: 0 });
    const scaled = moranTest(
      w,
      loads.map((v) => 2.5 * v + 7),
      { rng: seededRng(1), permutations: 0 },
    );
    expectClose(scaled.I!, base.I!, { rel: 1e-12 }, 'I under affine rescaling');
    expectClose(scaled.varianceRandomisation!, base.varianceRandomisation!, { rel: 1e-9 }, 'Var_R under rescaling');
    // Relabel: new index k holds old pen perm[k]; rebuild the same joins under the new indices.
    const perm = shuffleInPlace(
      Array.from({ length: 20 }, (_, i) => i),
      seededRng(4),
    );
    const where = new Array<number>(20);
    perm.forEach((old, k) => (where[old] = k));
    const edges: [number, number][] = [];
    for (let i = 0; i < 20; i++)
      for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) edges.push([where[i]!, where[w.neighbours[a]!]!]);
    const relabelled = weightsFromEdges(
      perm.map((old) => `g${old}`),
      edges,
      'binary',
      'relabelled',
    );
    const r = moranTest(
      relabelled,
      perm.map((old) => loads[old]!),
      { rng: seededRng(1), permutations: 0 },
    );
    expectClose(r.I!, base.I!, { rel: 1e-12 }, 'I under relabelling');
  });

  it('returns I = null with a reason, never NaN, when every load is zero', () => {
    const m = moranTest(row6, [0, 0, 0, 0, 0, 0], { rng: seededRng(1), permutations: 99 });
    expect(m.I).toBeNull();
    expect(m.zRandomisation).toBeNull();
    expect(m.pPermutation).toBeNull();
    expect(m.reason).toMatch(/equal/);
    expect(JSON.stringify(m)).not.toMatch(/NaN/);
  });

  it('gives clustered loads a large positive z and a checkerboard a negative one', () => {
    const w = grid(6, 6);
    const block = Array.from({ length: 36 }, (_, i) => (i % 6 < 3 ? 20 : 0));
    const checker = Array.from({ length: 36 }, (_, i) => ((Math.floor(i / 6) + (i % 6)) % 2 === 0 ? 20 : 0));
    const a = moranTest(w, block, { rng: seededRng(1), permutations: 199 });
    const b = moranTest(w, checker, { rng: seededRng(1), permutations: 199 });
    expect(a.zRandomisation!).toBeGreaterThan(4);
    expectClose(a.pPermutation!, 1 / 200, { rel: 1e-12 }, 'no permutation beats the block: (1+0)/(1+199)');
    expect(b.zRandomisation!).toBeLessThan(-4);
  });

  it('gives roughly uniform permutation p-values for continuous loads under random arrangement', () => {
    // Coarse check (Besag & Clifford 1989): continuous values have no ties, so p is close to
    // uniform: about 10% below 0.1 and 50% below 0.5 over 300 random arrangements (fixed seed).
    const w = grid(4, 5);
    const rng = seededRng(77);
    let below10 = 0;
    let below50 = 0;
    const runs = 300;
    for (let r = 0; r < runs; r++) {
      const loads = Array.from({ length: 20 }, () => rng() * 10);
      const p = moranTest(w, loads, { rng, permutations: 99 }).pPermutation!;
      if (p <= 0.1) below10++;
      if (p <= 0.5) below50++;
    }
    expect(Math.abs(below10 / runs - 0.1)).toBeLessThan(0.06);
    expect(Math.abs(below50 / runs - 0.5)).toBeLessThan(0.1);
  });

  describe('permutation p-value against exact enumeration of every arrangement', () => {
    // Besag & Clifford 1989: the Monte Carlo p (1 + b)/(1 + m) estimates the exact permutation
    // p-value, the share of all arrangements of the values whose I is at least the observed one.
    // Exact here by listing every distinct arrangement of the multiset (9!/6! = 504 on a 3 x 3 grid
    // with six tied zeros); the sampler must agree within 5 binomial standard errors (a fixed seed,
    // so the check is repeatable; the bound fails a biased sampler that favours any position).
    function distinctArrangements(values: number[]): number[][] {
      if (values.length <= 1) return [values];
      const seen = new Set<number>();
      const out: number[][] = [];
      values.forEach((v, i) => {
        if (seen.has(v)) return;
        seen.add(v);
        for (const rest of distinctArrangements([...values.slice(0, i), ...values.slice(i + 1)]))
          out.push([v, ...rest]);
      });
      return out;
    }
    function exactP(w: SpatialWeights, observed: number[]): number {
      const I = moranTest(w, observed, { rng: seededRng(1), permutations: 0 }).I!;
      const all = distinctArrangements(observed);
      const atLeast = all.filter(
        (a) => moranTest(w, a, { rng: seededRng(1), permutations: 0 }).I! >= I - 1e-9 * Math.max(1, Math.abs(I)),
      ).length;
      return atLeast / all.length;
    }
    const m = 40_000;
    function expectSamplerNear(w: SpatialWeights, loads: number[], label: string) {
      const exact = exactP(w, loads);
      const sampled = moranTest(w, loads, { rng: seededRng(2024), permutations: m }).pPermutation!;
      const se = Math.sqrt((exact * (1 - exact)) / m);
      expect(Math.abs(sampled - exact), `${label}: sampled ${sampled} vs exact ${exact}`).toBeLessThan(5 * se + 1 / m);
    }

    it('agrees on binary rook weights with tied zero loads', () => {
      expectSamplerNear(grid(3, 3), [0, 0, 0, 0, 0, 5, 12, 0, 3], 'rook 3x3, three positives');
      expectSamplerNear(grid(3, 3), [7, 9, 0, 0, 0, 0, 0, 0, 0], 'rook 3x3, adjacent pair');
    });

    it('agrees on asymmetric row-standardised nearest-neighbour weights', () => {
      // Two nearest neighbours, row-standardised: w_ij != w_ji, so the row and column sums differ.
      const pts = [
        { id: 'a', x: 0, y: 0 },
        { id: 'b', x: 1, y: 0.1 },
        { id: 'c', x: 2.5, y: 0 },
        { id: 'd', x: 0.2, y: 1.4 },
        { id: 'e', x: 3.1, y: 1.2 },
        { id: 'f', x: 1.7, y: 2.2 },
        { id: 'g', x: 4.5, y: 2.9 },
        { id: 'h', x: 0.4, y: 3.3 },
      ];
      const w = knnWeights(pts, 2, 'row');
      expectSamplerNear(w, [0, 2.5, 0, 0, 11, 0, 4, 0], 'knn(2) row, three positives');
      expectSamplerNear(w, [1, 1, 0, 0, 3, 0, 3, 2], 'knn(2) row, repeated non-zero values');
    });
  });

  it('gives the same permutation p when the generator is called once per draw as when it fills draws in bulk', () => {
    // fillUniform's contract (src/util/random.ts): the same numbers in the same order as that many
    // calls. A generator without a bulk fill is called per draw; the p-value must not change.
    const w = grid(5, 5);
    const loads = Array.from({ length: 25 }, (_, i) => (i % 7 === 0 ? 2 + (i % 3) : i === 12 ? 5 : 0));
    const bulk = moranTest(w, loads, { rng: seededRng(23), permutations: 999 });
    const inner = seededRng(23);
    const perCall = moranTest(w, loads, { rng: () => inner(), permutations: 999 });
    expect(perCall.pPermutation).toBe(bulk.pPermutation);
    expect(bulk.pPermutation).toBeGreaterThan(0);
  });
});
