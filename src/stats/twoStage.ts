/**
 * Site detection when infection is assumed to reach only some barns (a two-stage design).
 */
import { requireInteger, requireProbability } from './validate.js';

/**
 * Two-stage site sensitivity: D of the site's H barns infected (barns infected at random, every
 * barn surveyed with detection probability p_i; a barn not surveyed has p_i = 0):
 *
 *   P(site detects) = 1 - e_D({1 - p_i}) / C(H, D),
 *
 * e_D the elementary symmetric polynomial of degree D, so e_D / C(H, D) is the mean, over the
 * C(H, D) equally likely sets of infected barns, of the probability that every infected barn
 * misses. D = H gives 1 - prod(1 - p_i); D = 1 gives the mean of the p_i.
 *
 * Computed without forming e_D or C(H, D) (both overflow for a few hundred barns): with
 * A_k(j) the probability that a random k-subset of the first j barns detects,
 *   A_k(j) = ((j - k)/j) A_k(j - 1) + (k/j) (p_j + (1 - p_j) A_(k-1)(j - 1)),  A_0(j) = 0,
 * which follows from e_k(j) = e_k(j - 1) + q_j e_(k-1)(j - 1) and Pascal's rule divided through
 * by C(j, k). Every term is a non-negative mixture, so no digits cancel; O(H D) operations.
 *
 * @param barnProbabilities p_i, each in [0, 1] (H = the list's length, >= 1)
 * @param infectedBarns D, an integer in [1, H]
 * @throws RangeError when an argument is out of its domain
 * @see Cameron AR, Baldock FC 1998, Two-stage sampling in surveys to substantiate freedom from
 *   disease, Prev Vet Med 34:19-30 (from memory); R package epiR, `rsu.sep.rs2st` and
 *   `rsu.sep.rsvarse` (general-purpose reference implementations).
 * @example twoStageSiteDetection([0.9, 0.5, 0.2], 2) // 1 - (0.05 + 0.08 + 0.40) / 3 = 0.823333...
 */
export function twoStageSiteDetection(barnProbabilities: readonly number[], infectedBarns: number): number {
  const barns = barnProbabilities.length;
  requireInteger('barnProbabilities.length', barns, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  requireInteger('infectedBarns', infectedBarns, 1, barns, '[1, barns]');
  barnProbabilities.forEach((p, i) => requireProbability(`barnProbabilities[${i}]`, p));
  // detects[k] holds A_k(j) for the barns seen so far; updated from high k down so that
  // detects[k - 1] is still A_(k-1)(j - 1) when A_k(j) is formed.
  const detects = new Float64Array(infectedBarns + 1);
  for (let j = 1; j <= barns; j++) {
    const p = barnProbabilities[j - 1]!;
    for (let k = Math.min(j, infectedBarns); k >= 1; k--) {
      detects[k] = ((j - k) / j) * detects[k]! + (k / j) * (p + (1 - p) * detects[k - 1]!);
    }
  }
  return detects[infectedBarns]!;
}

/**
 * The barn-level design value as a number of barns: a count is taken as it is, a proportion of
 * the site's barns is rounded up (at least one barn).
 * @throws RangeError for a count outside [1, barns] or a proportion outside (0, 1]
 */
export function designInfectedBarns(
  design: { kind: 'barns'; value: number } | { kind: 'proportion'; value: number },
  barns: number,
): number {
  requireInteger('barns', barns, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  if (design.kind === 'barns') {
    requireInteger('infectedBarns', design.value, 1, barns, '[1, barns]');
    return design.value;
  }
  if (!(design.value > 0 && design.value <= 1))
    throw new RangeError(`\`barn design prevalence\` must be a number in (0, 1], got ${String(design.value)}`);
  // A proportion of the barns stands for whole barns: round up, so that 0.1 of 3 barns is 1 barn.
  return Math.max(1, Math.ceil(design.value * barns - 1e-9));
}
