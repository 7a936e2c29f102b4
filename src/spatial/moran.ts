/**
 * Global Moran's I on a continuous pen value (the load score), with moments under normality
 * and randomisation and a permutation p-value.
 */
import type { Rng } from '../util/random.js';
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
 * z under randomisation; permutation p = (1 + #{I_perm >= I}) / (1 + m), values shuffled
 * over the pens. Constant values (e.g. every load 0) leave I undefined: null with a reason.
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
  const cross = (zz: Float64Array) => {
    let s = 0;
    for (let i = 0; i < n; i++) {
      let lag = 0;
      for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) lag += w.weights[a]! * zz[w.neighbours[a]!]!;
      s += zz[i]! * lag;
    }
    return s;
  };
  const factor = n / (s0 * m2);
  const I = factor * cross(z);
  const b2 = (n * m4) / (m2 * m2);
  let varianceRandomisation: number | null = null;
  if (n >= 4) {
    const num =
      n * ((n * n - 3 * n + 3) * s1 - n * s2 + 3 * s0 * s0) - b2 * ((n * n - n) * s1 - 2 * n * s2 + 6 * s0 * s0);
    varianceRandomisation = num / ((n - 1) * (n - 2) * (n - 3) * s0 * s0) - expected * expected;
  }
  const zOf = (variance: number | null) =>
    variance !== null && variance > 1e-15 ? (I - expected) / Math.sqrt(variance) : null;
  let pPermutation: number | null = null;
  if (permutations > 0) {
    const perm = Float64Array.from(z);
    const threshold = I - 1e-9 * Math.max(1, Math.abs(I));
    let atLeast = 0;
    for (let m = 0; m < permutations; m++) {
      for (let i = n - 1; i > 0; i--) {
        const j = Math.floor(rng() * (i + 1));
        const tmp = perm[i]!;
        perm[i] = perm[j]!;
        perm[j] = tmp;
      }
      if (factor * cross(perm) >= threshold) atLeast++;
    }
    pPermutation = (1 + atLeast) / (1 + permutations);
  }
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
