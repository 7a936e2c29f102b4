/**
 * Global Moran's I on a continuous pen value (the load score), with moments under normality
 * and randomisation and a permutation p-value.
 */
import { fillUniform, type Rng } from '../util/random.js';
import { weightConstants, type SpatialWeights } from './weights.js';

export interface MoranResult {
  n: number;
  /** Moran's I; null when it is undefined (all values equal, or no joins). */
  I: number | null;
  /** E[I] = -1/(n-1). */
  expected: number;
  /** Var(I) under the normality assumption; null without joins. */
  varianceNormality: number | null;
  /** Var(I) under randomisation (Cliff & Ord, with kurtosis b2); null for n < 4 or constant values. */
  varianceRandomisation: number | null;
  zNormality: number | null;
  zRandomisation: number | null;
  /** One-sided P(I_perm >= I) with (1 + b)/(1 + m); null when I is null. */
  pPermutation: number | null;
  permutations: number;
  /** Sample kurtosis b2 = n sum z^4 / (sum z^2)^2; null for constant values. */
  kurtosis: number | null;
  /** Why a field is null, when one is. */
  reason?: string;
}

export interface MoranOptions {
  rng: Rng;
  /** Monte Carlo permutations of the values, integer >= 0 (0 skips the permutation test). */
  permutations: number;
}

/**
 * Moran's I = (n / S0) sum_ij w_ij z_i z_j / sum_i z_i^2, z_i = x_i - mean, with
 * E[I] = -1/(n-1);
 * Var_N(I) = (n^2 S1 - n S2 + 3 S0^2) / ((n^2 - 1) S0^2) - E[I]^2;
 * Var_R(I) = { n[(n^2 - 3n + 3) S1 - n S2 + 3 S0^2] - b2[(n^2 - n) S1 - 2n S2 + 6 S0^2] }
 *            / ((n-1)(n-2)(n-3) S0^2) - E[I]^2,  b2 = n sum z^4 / (sum z^2)^2;
 * z under randomisation; permutation p = (1 + #{I_perm >= I}) / (1 + m) over m random
 * arrangements of the values on the pens, drawn by placing only the values that differ from the
 * most common one (exact in distribution, not the same draws as a full shuffle for the same
 * seed: see moranPermutationP). Constant values (e.g. every load 0) leave I undefined: null with
 * a reason.
 *
 * @example moranTest(fenceRowOf6, [0,1,1,0,0,0], { rng, permutations: 0 }) // I = 0.2, varianceNormality = 0.128 (by hand, Cliff & Ord 1981 moments)
 * @param values one finite value per pen of `w` (load = max(0, cycle limit - Ct), 0 if not detected).
 * @throws RangeError for fewer than 2 pens, mismatched lengths, non-finite values or a bad permutation count.
 * @see Moran P.A.P. (1950) Notes on continuous stochastic phenomena, Biometrika 37:17-23.
 * @see Cliff A.D., Ord J.K. (1981) Spatial Processes: Models and Applications, ch. 1-2.
 */
export function moranTest(w: SpatialWeights, values: readonly number[], options: MoranOptions): MoranResult {
  const n = w.ids.length;
  if (n < 2) throw new RangeError(`\`pens\` must be an integer in [2, Infinity), got ${n}`);
  if (values.length !== n) throw new RangeError(`\`values\` must have one value per pen (${n}), got ${values.length}`);
  values.forEach((v, i) => {
    if (!Number.isFinite(v)) throw new RangeError(`\`values[${i}]\` must be a finite number, got ${v}`);
  });
  const { permutations, rng } = options;
  if (!Number.isInteger(permutations) || permutations < 0)
    throw new RangeError(`\`permutations\` must be an integer >= 0, got ${permutations}`);
  const { s0, s1, s2 } = weightConstants(w);
  const expected = -1 / (n - 1);
  let mean = 0;
  for (const v of values) mean += v;
  mean /= n;
  const z = Float64Array.from(values, (v) => v - mean);
  let m2 = 0;
  let m4 = 0;
  for (const v of z) {
    m2 += v * v;
    m4 += v ** 4;
  }
  const base = { n, expected, permutations };
  if (s0 === 0) {
    return {
      ...base,
      I: null,
      varianceNormality: null,
      varianceRandomisation: null,
      zNormality: null,
      zRandomisation: null,
      pPermutation: null,
      kurtosis: null,
      reason: 'no pen has a neighbour (S0 = 0)',
    };
  }
  const varianceNormality = (n * n * s1 - n * s2 + 3 * s0 * s0) / ((n * n - 1) * s0 * s0) - expected * expected;
  // Relative to the spread of the values: all equal up to rounding counts as constant.
  const scale = values.reduce((m, v) => Math.max(m, Math.abs(v)), 0);
  if (m2 <= 1e-24 * Math.max(1, scale * scale) * n) {
    return {
      ...base,
      I: null,
      varianceNormality,
      varianceRandomisation: null,
      zNormality: null,
      zRandomisation: null,
      pPermutation: null,
      kurtosis: null,
      reason: "all values are equal (no variance), Moran's I is undefined",
    };
  }
  const factor = n / (s0 * m2);
  const I = factor * crossProduct(w, z);
  const b2 = (n * m4) / (m2 * m2);
  let varianceRandomisation: number | null = null;
  if (n >= 4) {
    const num =
      n * ((n * n - 3 * n + 3) * s1 - n * s2 + 3 * s0 * s0) - b2 * ((n * n - n) * s1 - 2 * n * s2 + 6 * s0 * s0);
    varianceRandomisation = num / ((n - 1) * (n - 2) * (n - 3) * s0 * s0) - expected * expected;
  }
  const zOf = (variance: number | null) =>
    variance !== null && variance > 1e-15 ? (I - expected) / Math.sqrt(variance) : null;
  const threshold = I - 1e-9 * Math.max(1, Math.abs(I));
  const pPermutation = permutations > 0 ? moranPermutationP(w, z, factor, threshold, permutations, rng) : null;
  return {
    ...base,
    I,
    varianceNormality,
    varianceRandomisation,
    zNormality: zOf(varianceNormality),
    zRandomisation: zOf(varianceRandomisation),
    pPermutation,
    kurtosis: b2,
    ...(n < 4 ? { reason: 'randomisation variance needs at least 4 pens' } : {}),
  };
}

/** sum_ij w_ij z_i z_j over the sparse rows of `w`. */
function crossProduct(w: SpatialWeights, z: Float64Array): number {
  let s = 0;
  for (let i = 0; i < z.length; i++) {
    let lag = 0;
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) lag += w.weights[a]! * z[w.neighbours[a]!]!;
    s += z[i]! * lag;
  }
  return s;
}

/**
 * The permutation p-value (1 + #{I_perm >= I}) / (1 + m) of Moran's I, drawing the arrangements
 * without visiting every pen.
 *
 * Write each centred value as z_i = c + d_i, with c the most frequent value (most pens of a round
 * are not detected and share one load) and d_i = 0 for the k pens holding it. Then
 *   sum_ij w_ij z_i z_j = c^2 S0 + c sum_p d_p (r_p + k_p) + sum_pq w_pq d_p d_q,
 * with r_p and k_p the row and column sums of w at p and the sums over the positions p, q of the
 * other n - k values. A uniform permutation of all n values places those n - k values at a
 * uniformly random ordered subset of positions, which a partial Fisher-Yates shuffle draws in
 * n - k steps (Knuth 1997, The Art of Computer Programming vol. 2, 3.4.2, algorithm P stopped
 * early); the pens holding c fill the rest and add only the constant c^2 S0. Each draw thus
 * costs O((n - k) x neighbours) instead of O(n x neighbours). The arrangements are drawn from
 * exactly the distribution of a full shuffle, so the p-value keeps its exact Monte Carlo meaning
 * (Besag & Clifford 1989, Generalized Monte Carlo significance tests, Biometrika 76:633-642);
 * it is not the same number as a full shuffle's for the same seed, because the generator is
 * consumed differently.
 *
 * `threshold` is the observed I less a relative 1e-9, so arrangements equal to the observed one
 * count as at least as large despite rounding in the regrouped sums.
 */
function moranPermutationP(
  w: SpatialWeights,
  z: Float64Array,
  factor: number,
  threshold: number,
  permutations: number,
  rng: Rng,
): number {
  const n = z.length;
  const common = modalValue(z);
  const spare: number[] = [];
  for (const v of z) if (v !== common) spare.push(v - common);
  const deviations = Float64Array.from(spare);
  const k = deviations.length;
  const rowPlusColumn = new Float64Array(n);
  let s0 = 0;
  for (let i = 0; i < n; i++) {
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) {
      rowPlusColumn[i]! += w.weights[a]!;
      rowPlusColumn[w.neighbours[a]!]! += w.weights[a]!;
      s0 += w.weights[a]!;
    }
  }
  const constant = common * common * s0;
  const positions = Int32Array.from({ length: n }, (_, i) => i);
  // placedIn[pen] = draw number + 1 when a value is placed at pen in this draw (no reset needed
  // between draws); slotAt[pen] is then the index in `deviations` of that value.
  const placedIn = new Int32Array(n);
  const slotAt = new Int32Array(n);
  const { offsets, neighbours, weights } = w;
  // Each arrangement's k draws in one call (the same numbers, in the same order, as k calls).
  const draws = new Float64Array(k);
  let atLeast = 0;
  for (let m = 0; m < permutations; m++) {
    const mark = m + 1;
    fillUniform(rng, draws, k);
    for (let t = 0; t < k; t++) {
      const j = t + Math.floor(draws[t]! * (n - t));
      const p = positions[j]!;
      positions[j] = positions[t]!;
      positions[t] = p;
      placedIn[p] = mark;
      slotAt[p] = t;
    }
    let linear = 0;
    let quadratic = 0;
    for (let t = 0; t < k; t++) {
      const p = positions[t]!;
      const dp = deviations[t]!;
      linear += dp * rowPlusColumn[p]!;
      let lag = 0;
      for (let a = offsets[p]!, end = offsets[p + 1]!; a < end; a++) {
        const q = neighbours[a]!;
        if (placedIn[q] === mark) lag += weights[a]! * deviations[slotAt[q]!]!;
      }
      quadratic += dp * lag;
    }
    if (factor * (constant + common * linear + quadratic) >= threshold) atLeast++;
  }
  return (1 + atLeast) / (1 + permutations);
}

/** The value held by the most entries (the first such in order of appearance). */
function modalValue(values: Float64Array): number {
  const counts = new Map<number, number>();
  let best = values[0]!;
  let bestCount = 0;
  for (const v of values) {
    const c = (counts.get(v) ?? 0) + 1;
    counts.set(v, c);
    if (c > bestCount) {
      best = v;
      bestCount = c;
    }
  }
  return best;
}
