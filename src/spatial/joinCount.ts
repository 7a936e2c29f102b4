/**
 * Global join-count statistics for positive/negative pens, with moments under non-free
 * sampling (the number of positive pens fixed) and a permutation p-value that is exact when the
 * placements are few enough to enumerate.
 */
import { fillUniform, type Rng } from '../util/random.js';
import { keptOfFrozen, keptOfFrozenBy } from '../util/kept.js';
import { logChoose } from './combinatorics.js';
import { subWeights, weightConstants, type SpatialWeights } from './weights.js';

export interface JoinCounts {
  /** Positive-positive joins, 1/2 sum_ij w_ij x_i x_j. */
  bb: number;
  /** Positive-negative joins, 1/2 sum_ij w_ij (x_i - x_j)^2. */
  bw: number;
  /** Negative-negative joins, 1/2 sum_ij w_ij (1-x_i)(1-x_j). */
  ww: number;
  /** All joins, S0 / 2. */
  joins: number;
}

export interface JoinCountMoments {
  expectedBB: number;
  varianceBB: number;
  expectedBW: number;
  expectedWW: number;
}

export interface PermutationInference {
  /** 'exact': every placement of the positives enumerated; 'monte-carlo': (1+b)/(1+m). */
  method: 'exact' | 'monte-carlo';
  /** Number of distinct placements of the positives under the null (product over strata). */
  placements: number;
  /** Monte Carlo permutations drawn (0 when exact). */
  permutations: number;
  /** Whether permutations were stratified (within barns). */
  stratified: boolean;
}

export interface JoinCountTest extends JoinCounts, JoinCountMoments {
  n: number;
  positives: number;
  /** (BB - E[BB]) / sd; null when the variance is 0 (e.g. no or all positives). */
  zBB: number | null;
  /** One-sided P(BB >= observed) under the permutation null. */
  pPermutation: number;
  inference: PermutationInference;
}

export interface JoinCountOptions {
  rng: Rng;
  /** Monte Carlo permutations when exact enumeration is too large; integer >= 1. */
  permutations: number;
  /** Enumerate exactly when the number of placements is at most this (default 1e6). */
  exactLimit?: number;
  /** Stratum (barn) index per pen: positives are permuted within strata only. */
  strata?: readonly number[];
}

/** Symmetric join weights a_ij = (w_ij + w_ji)/2 in compressed rows, so BB = 1/2 sum a_ij x_i x_j. */
export interface JoinGraph {
  n: number;
  offsets: Int32Array;
  neighbours: Int32Array;
  weights: Float64Array;
}

/**
 * Builds the symmetric join graph used by all join-count loops. The graph of frozen weights is
 * kept while they live (treat it as read-only): weights handed out again for the same pens are
 * not walked again.
 */
export function joinGraph(w: SpatialWeights): JoinGraph {
  return keptOfFrozen(graphOfFrozen, w, () => Object.freeze(buildJoinGraph(w)));
}

const graphOfFrozen = new WeakMap<SpatialWeights, JoinGraph>();

function buildJoinGraph(w: SpatialWeights): JoinGraph {
  const n = w.ids.length;
  const rows: Map<number, number>[] = Array.from({ length: n }, () => new Map());
  for (let i = 0; i < n; i++) {
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) {
      const j = w.neighbours[a]!;
      const half = w.weights[a]! / 2;
      rows[i]!.set(j, (rows[i]!.get(j) ?? 0) + half);
      rows[j]!.set(i, (rows[j]!.get(i) ?? 0) + half);
    }
  }
  const offsets = new Int32Array(n + 1);
  for (let i = 0; i < n; i++) offsets[i + 1] = offsets[i]! + rows[i]!.size;
  const neighbours = new Int32Array(offsets[n]!);
  const weights = new Float64Array(offsets[n]!);
  for (let i = 0; i < n; i++) {
    let at = offsets[i]!;
    for (const [j, v] of [...rows[i]!.entries()].sort((p, q) => p[0] - q[0])) {
      neighbours[at] = j;
      weights[at] = v;
      at++;
    }
  }
  return { n, offsets, neighbours, weights };
}

function checkLabels(n: number, positive: readonly boolean[]): void {
  if (positive.length !== n)
    throw new RangeError(`\`positive\` must have one flag per pen (${n}), got ${positive.length}`);
}

/**
 * Join counts BB, BW, WW for binary labels under any non-negative weights.
 * BB + BW + WW = S0 / 2 (all joins).
 * @throws RangeError when the labels do not match the pens.
 * @see Cliff A.D., Ord J.K. (1981) Spatial Processes: Models and Applications, ch. 1.
 */
export function joinCounts(w: SpatialWeights, positive: readonly boolean[]): JoinCounts {
  const n = w.ids.length;
  checkLabels(n, positive);
  let bb = 0;
  let bw = 0;
  let ww = 0;
  for (let i = 0; i < n; i++) {
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) {
      const j = w.neighbours[a]!;
      const v = w.weights[a]! / 2;
      const xi = positive[i]!;
      const xj = positive[j]!;
      if (xi && xj) bb += v;
      else if (!xi && !xj) ww += v;
      else bw += v;
    }
  }
  return { bb, bw, ww, joins: bb + bw + ww };
}

/** n^(k) = n (n-1) ... (n-k+1); 0 when k > n. */
function falling(n: number, k: number): number {
  let r = 1;
  for (let t = 0; t < k; t++) r *= n - t;
  return r;
}

/**
 * Join-count moments under non-free sampling (Cliff & Ord 1981): with n1 of n pens positive,
 * E(BB) = 1/2 S0 n1^(2)/n^(2);
 * Var(BB) = 1/4 [S1 n1^(2)/n^(2) + (S2 - 2 S1) n1^(3)/n^(3) + (S0^2 + S1 - S2) n1^(4)/n^(4)] - E(BB)^2;
 * E(BW) = S0 n1 (n - n1) / n^(2); E(WW) = 1/2 S0 n0^(2)/n^(2).
 *
 * @param positives n1, integer in [0, n].
 * @example joinCountMoments(fenceRowOf6, 2) // { expectedBB: 1/3, varianceBB: 2/9, ... } (by hand; test/spatial/joinCount.test.ts)
 * @throws RangeError on bad n1.
 * @see Cliff A.D., Ord J.K. (1981) Spatial Processes: Models and Applications, ch. 1-2.
 */
export function joinCountMoments(w: SpatialWeights, positives: number): JoinCountMoments {
  const n = w.ids.length;
  if (!Number.isInteger(positives) || positives < 0 || positives > n)
    throw new RangeError(`\`positives\` must be an integer in [0, ${n}], got ${positives}`);
  const { s0, s1, s2 } = weightConstants(w);
  const ratio = (k: number) => (n < k ? 0 : falling(positives, k) / falling(n, k));
  const expectedBB = 0.5 * s0 * ratio(2);
  const second = 0.25 * (s1 * ratio(2) + (s2 - 2 * s1) * ratio(3) + (s0 * s0 + s1 - s2) * ratio(4));
  // Clamp rounding noise: a variance that is zero analytically can come out as -1e-17.
  const varianceBB = Math.max(0, second - expectedBB * expectedBB);
  const expectedBW = n < 2 ? 0 : (s0 * positives * (n - positives)) / falling(n, 2);
  const expectedWW = n < 2 ? 0 : (0.5 * s0 * falling(n - positives, 2)) / falling(n, 2);
  return { expectedBB, varianceBB: zeroIfTiny(varianceBB, expectedBB), expectedBW, expectedWW };
}

function zeroIfTiny(variance: number, scale: number): number {
  return variance <= 1e-12 * Math.max(1, scale * scale) ? 0 : variance;
}

/**
 * Exact BB moments under stratified permutation (positives permuted within each stratum),
 * from joint inclusion probabilities: P(all of a pen set positive) = prod_s n1s^(m_s)/ns^(m_s),
 * m_s = pens of the set in stratum s. E(BB) = sum_e a_e P(e); E(BB^2) = sum_e sum_f a_e a_f P(e u f).
 * With block-diagonal weights (no joins between strata) this equals the sum of the per-stratum
 * non-free moments, which is what is computed then.
 * @see Cliff A.D., Ord J.K. (1981) Spatial Processes, ch. 2 (moments of join counts by inclusion probabilities).
 */
export function stratifiedJoinCountMoments(
  w: SpatialWeights,
  strata: readonly number[],
  positive: readonly boolean[],
): { expectedBB: number; varianceBB: number } {
  const n = w.ids.length;
  checkLabels(n, positive);
  if (strata.length !== n) throw new RangeError(`\`strata\` must have one entry per pen (${n}), got ${strata.length}`);
  const size = new Map<number, number>();
  const pos = new Map<number, number>();
  strata.forEach((s, i) => {
    size.set(s, (size.get(s) ?? 0) + 1);
    if (positive[i]) pos.set(s, (pos.get(s) ?? 0) + 1);
  });
  // Block-diagonal weights (no join between strata, the usual site case): strata are independent,
  // so the moments are sums of the per-stratum non-free moments, without the O(joins^2) sum.
  const blocks = strataBlocks(w, strata);
  if (blocks !== null) {
    let expectedBB = 0;
    let varianceBB = 0;
    for (const { stratum, weights } of blocks) {
      const m = joinCountMoments(weights, pos.get(stratum) ?? 0);
      expectedBB += m.expectedBB;
      varianceBB += m.varianceBB;
    }
    return { expectedBB, varianceBB: zeroIfTiny(varianceBB, expectedBB) };
  }
  const g = joinGraph(w);
  const edges: [number, number, number][] = [];
  for (let i = 0; i < n; i++)
    for (let a = g.offsets[i]!; a < g.offsets[i + 1]!; a++)
      if (g.neighbours[a]! > i) edges.push([i, g.neighbours[a]!, g.weights[a]!]);
  const inclusion = (pens: number[]): number => {
    const count = new Map<number, number>();
    for (const p of new Set(pens)) count.set(strata[p]!, (count.get(strata[p]!) ?? 0) + 1);
    let prob = 1;
    for (const [s, m] of count) prob *= size.get(s)! < m ? 0 : falling(pos.get(s) ?? 0, m) / falling(size.get(s)!, m);
    return prob;
  };
  let mean = 0;
  let second = 0;
  for (const [i, j, a] of edges) {
    mean += a * inclusion([i, j]);
    for (const [k, l, b] of edges) second += a * b * inclusion([i, j, k, l]);
  }
  const variance = Math.max(0, second - mean * mean);
  return { expectedBB: mean, varianceBB: zeroIfTiny(variance, mean) };
}

/** Each stratum's own weights, strata in first-seen order. */
type StrataBlocks = readonly { stratum: number; weights: SpatialWeights }[];

/**
 * Each stratum's weights (subWeights) when no join crosses strata, else null. Kept for frozen
 * weights while they live, by strata: the weights and strata of the same pens come again.
 */
function strataBlocks(w: SpatialWeights, strata: readonly number[]): StrataBlocks | null {
  return keptOfFrozenBy(blocksOfFrozen, w, strata.join(','), () => buildStrataBlocks(w, strata));
}

const blocksOfFrozen = new WeakMap<SpatialWeights, Map<string, StrataBlocks | null>>();

function buildStrataBlocks(w: SpatialWeights, strata: readonly number[]): StrataBlocks | null {
  for (let i = 0; i < w.ids.length; i++)
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) if (strata[w.neighbours[a]!] !== strata[i]) return null;
  return Object.freeze(
    [...pensByStratum(strata)].map(([stratum, pens]) => Object.freeze({ stratum, weights: subWeights(w, pens) })),
  );
}

/** Pen indices by stratum, strata in first-seen order. */
type StrataGroups = readonly (readonly number[])[];

/**
 * Groups pen indices by stratum, in first-seen order; the groups of a frozen strata array (the
 * site's, handed out again for the same rope sets) are kept while it lives.
 */
function groupStrata(n: number, strata: readonly number[] | undefined): StrataGroups {
  if (!strata) return [Array.from({ length: n }, (_, i) => i)];
  if (strata.length !== n) throw new RangeError(`\`strata\` must have one entry per pen (${n}), got ${strata.length}`);
  return keptOfFrozen(groupsOfFrozen, strata, () =>
    Object.freeze([...pensByStratum(strata).values()].map((pens) => Object.freeze(pens))),
  );
}

const groupsOfFrozen = new WeakMap<readonly number[], StrataGroups>();

/** Pen indices by stratum, strata in first-seen order. */
function pensByStratum(strata: readonly number[]): Map<number, number[]> {
  const groups = new Map<number, number[]>();
  strata.forEach((s, i) => {
    const group = groups.get(s);
    if (group) group.push(i);
    else groups.set(s, [i]);
  });
  return groups;
}

/**
 * Calls `visit(bb)` for every placement of the positives (per stratum, C(ns, n1s) each),
 * updating BB incrementally: placing pen i adds sum_j a_ij over the pens already placed.
 */
function enumeratePlacements(g: JoinGraph, groups: StrataGroups, counts: number[], visit: (bb: number) => void): void {
  const placed = new Uint8Array(g.n);
  const gain = (i: number) => {
    let s = 0;
    for (let a = g.offsets[i]!; a < g.offsets[i + 1]!; a++) if (placed[g.neighbours[a]!]) s += g.weights[a]!;
    return s;
  };
  const recurse = (group: number, start: number, left: number, bb: number): void => {
    if (left === 0) {
      if (group + 1 === groups.length) visit(bb);
      else recurse(group + 1, 0, counts[group + 1]!, bb);
      return;
    }
    const pens = groups[group]!;
    for (let t = start; t <= pens.length - left; t++) {
      const i = pens[t]!;
      const add = gain(i);
      placed[i] = 1;
      recurse(group, t + 1, left - 1, bb + add);
      placed[i] = 0;
    }
  };
  recurse(0, 0, counts[0]!, 0);
}

/** BB for a placement marked in `mark` (1 = positive), listed in `chosen`. */
export function bbOfPlacement(g: JoinGraph, mark: Uint8Array, chosen: Int32Array, count: number): number {
  let s = 0;
  for (let c = 0; c < count; c++) {
    const i = chosen[c]!;
    for (let a = g.offsets[i]!; a < g.offsets[i + 1]!; a++) if (mark[g.neighbours[a]!]) s += g.weights[a]!;
  }
  return s / 2;
}

/**
 * Join-count test for clustering of positive pens: BB with non-free moments, z-score, and a
 * one-sided permutation p-value P(BB >= observed) with the number of positives fixed (within
 * each stratum when `strata` is given). Exact enumeration of all placements when there are at
 * most `exactLimit` (default 1e6); otherwise Monte Carlo p = (1 + b)/(1 + m), b = permutations
 * with BB >= observed. Why exact: with few positives the normal approximation is badly
 * anti-conservative (Cliff & Ord 1981; by enumeration, a 20-pen barn with 4 positives).
 *
 * @param positive one flag per pen of `w`.
 * @throws RangeError on mismatched lengths or a bad permutation count.
 * @see Cliff A.D., Ord J.K. (1981) Spatial Processes: Models and Applications.
 * @see Besag J., Clifford P. (1989) Generalized Monte Carlo significance tests, Biometrika 76:633.
 */
export function joinCountTest(
  w: SpatialWeights,
  positive: readonly boolean[],
  options: JoinCountOptions,
): JoinCountTest {
  const n = w.ids.length;
  checkLabels(n, positive);
  const { permutations, rng } = options;
  const exactLimit = options.exactLimit ?? 1e6;
  if (!Number.isInteger(permutations) || permutations < 1)
    throw new RangeError(`\`permutations\` must be an integer >= 1, got ${permutations}`);
  const counts = joinCounts(w, positive);
  const n1 = positive.filter(Boolean).length;
  const groups = groupStrata(n, options.strata);
  const groupPositives = groups.map((pens) => pens.filter((i) => positive[i]).length);
  const stratified = options.strata !== undefined && groups.length > 1;
  const moments = joinCountMoments(w, n1);
  if (stratified) {
    const strat = stratifiedJoinCountMoments(w, options.strata!, positive);
    moments.expectedBB = strat.expectedBB;
    moments.varianceBB = strat.varianceBB;
  }
  const logPlacements = groups.reduce((sum, pens, s) => sum + logChoose(pens.length, groupPositives[s]!), 0);
  const placements = Math.round(Math.exp(logPlacements));
  const g = joinGraph(w);
  // Ties: BB values are sums of the same weights in different orders, so compare with a tolerance.
  const threshold = counts.bb - 1e-9 * Math.max(1, Math.abs(counts.bb));
  let pPermutation: number;
  let inference: PermutationInference;
  if (logPlacements <= Math.log(exactLimit) + 1e-9) {
    let atLeast = 0;
    let total = 0;
    enumeratePlacements(g, groups, groupPositives, (bb) => {
      total++;
      if (bb >= threshold) atLeast++;
    });
    pPermutation = atLeast / total;
    inference = { method: 'exact', placements: total, permutations: 0, stratified };
  } else {
    const mark = new Uint8Array(n);
    const chosen = new Int32Array(n1);
    const pools = groups.map((pens) => Int32Array.from(pens));
    // Each placement's n1 draws in one call (the same numbers, in the same order, as n1 calls).
    const draws = new Float64Array(n1);
    let atLeast = 0;
    for (let m = 0; m < permutations; m++) {
      mark.fill(0);
      fillUniform(rng, draws, n1);
      let c = 0;
      for (let s = 0; s < pools.length; s++) {
        const pool = pools[s]!;
        const k = groupPositives[s]!;
        // Partial Fisher-Yates: the first k slots of the pool become a uniform k-subset.
        for (let t = 0; t < k; t++) {
          const r = t + Math.floor(draws[c]! * (pool.length - t));
          const tmp = pool[t]!;
          pool[t] = pool[r]!;
          pool[r] = tmp;
          mark[pool[t]!] = 1;
          chosen[c++] = pool[t]!;
        }
      }
      if (bbOfPlacement(g, mark, chosen, c) >= threshold) atLeast++;
    }
    pPermutation = (1 + atLeast) / (1 + permutations);
    inference = { method: 'monte-carlo', placements, permutations, stratified };
  }
  const zBB = moments.varianceBB > 0 ? (counts.bb - moments.expectedBB) / Math.sqrt(moments.varianceBB) : null;
  return { n, positives: n1, ...counts, ...moments, zBB, pPermutation, inference };
}
