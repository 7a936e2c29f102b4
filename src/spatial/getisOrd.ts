/**
 * Local Getis-Ord Gi*: is a pen together with its neighbours a hot spot of load?
 */
import type { SpatialWeights } from './weights.js';

export interface LocalGiStar {
  id: string;
  /** Gi* z-score; null when undefined (constant values, or the pen's window is every pen). */
  z: number | null;
  /** Pens in the window, the pen itself included. */
  window: number;
}

/**
 * Gi*_i = (sum_j w_ij x_j - xbar W_i) / (s sqrt((n S1_i - W_i^2) / (n - 1))), the sums running
 * over all j including j = i with w_ii = 1, W_i = sum_j w_ij, S1_i = sum_j w_ij^2,
 * xbar and s^2 = sum x^2 / n - xbar^2 over all n pens. Binary and row-standardised weights use
 * the binary neighbour structure: Gi* is unchanged when a row (self included) is rescaled, so
 * row-standardising with the self weight gives the same z. General (distance) weights are used
 * as stored with w_ii = 1.
 *
 * @example localGiStar(fenceRowOf6, [0,1,1,0,0,0])[1].z // 1.581139 (by hand; test/spatial/getisOrd.test.ts)
 * @param values one finite value per pen (the load score).
 * @throws RangeError on mismatched lengths or non-finite values.
 * @see Ord J.K., Getis A. (1995) Local spatial autocorrelation statistics: distributional issues
 *   and an application, Geographical Analysis 27:286-306.
 * @see Getis A., Ord J.K. (1992) The analysis of spatial association by use of distance statistics,
 *   Geographical Analysis 24:189-206.
 */
export function localGiStar(w: SpatialWeights, values: readonly number[]): LocalGiStar[] {
  const n = w.ids.length;
  if (values.length !== n) throw new RangeError(`\`values\` must have one value per pen (${n}), got ${values.length}`);
  values.forEach((v, i) => {
    if (!Number.isFinite(v)) throw new RangeError(`\`values[${i}]\` must be a finite number, got ${v}`);
  });
  let sum = 0;
  let sumSq = 0;
  for (const v of values) {
    sum += v;
    sumSq += v * v;
  }
  const mean = sum / n;
  const variance = sumSq / n - mean * mean;
  const s = variance > 1e-12 * Math.max(1, mean * mean) ? Math.sqrt(variance) : 0;
  const binary = w.style !== 'general';
  return w.ids.map((id, i) => {
    let lag = values[i]!;
    let wSum = 1;
    let wSq = 1;
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) {
      const v = binary ? 1 : w.weights[a]!;
      lag += v * values[w.neighbours[a]!]!;
      wSum += v;
      wSq += v * v;
    }
    const spread = (n * wSq - wSum * wSum) / (n - 1);
    const z = s > 0 && n > 1 && spread > 1e-12 ? (lag - mean * wSum) / (s * Math.sqrt(spread)) : null;
    return { id, z, window: w.offsets[i + 1]! - w.offsets[i]! + 1 };
  });
}
