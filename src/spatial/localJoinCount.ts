/**
 * Local join count: for each positive pen, how many of its neighbours are positive, with an
 * exact conditional p-value.
 */
import { hypergeometricUpperTail } from './combinatorics.js';
import type { SpatialWeights } from './weights.js';

export interface LocalJoinCount {
  id: string;
  /** Positive neighbours of this positive pen. */
  bb: number;
  /** Neighbours (k). */
  neighbours: number;
  /** P(X >= bb), X ~ Hyp(n - 1 pens, n1 - 1 positives, k draws); null for an isolate. */
  p: number | null;
}

/**
 * Univariate local join count BB_i = x_i sum_j w_ij x_j on the binary neighbour structure of
 * `w` (any stored neighbour counts 1, whatever its weight, so the count is a number of pens).
 * Conditional on pen i being positive, its k neighbours are a random k of the other n - 1
 * pens, n1 - 1 of which are positive, so p_i = P(X >= BB_i) with
 * X ~ Hypergeometric(n - 1, n1 - 1, k). Only positive pens are listed.
 *
 * @param positive one flag per pen of `w`.
 * @throws RangeError on mismatched lengths.
 * @see Anselin L., Li X. (2019) Operational local join count statistics for cluster detection,
 *   Journal of Geographical Systems 21:189-210.
 */
export function localJoinCounts(w: SpatialWeights, positive: readonly boolean[]): LocalJoinCount[] {
  const n = w.ids.length;
  if (positive.length !== n)
    throw new RangeError(`\`positive\` must have one flag per pen (${n}), got ${positive.length}`);
  const n1 = positive.filter(Boolean).length;
  const out: LocalJoinCount[] = [];
  for (let i = 0; i < n; i++) {
    if (!positive[i]) continue;
    const k = w.offsets[i + 1]! - w.offsets[i]!;
    let bb = 0;
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) if (positive[w.neighbours[a]!]) bb++;
    out.push({ id: w.ids[i]!, bb, neighbours: k, p: k === 0 ? null : hypergeometricUpperTail(bb, n - 1, n1 - 1, k) });
  }
  return out;
}
