/**
 * Site (or herd) level: combining barns, each surveyed independently.
 */
import { requireInteger, requireProbability } from './validate.js';

/**
 * Site-level detection confidence from independent barn-level confidences:
 * P = 1 - prod_i (1 - p_i), computed as -expm1(sum_i log1p(-p_i)) so that many barns at low
 * confidence keep their digits.
 *
 * @param barnProbabilities p_i, each in [0, 1]; an empty list gives 0.
 * @throws RangeError when a p_i is not a probability.
 * @see Martin PAJ, Cameron AR, Greiner M 2007, Demonstrating freedom from disease using multiple
 *   complex data sources 1, Prev Vet Med 79:71-97.
 * @example siteDetection([0.85, 0.85, 0.85]) // 0.996625
 */
export function siteDetection(barnProbabilities: readonly number[]): number {
  let logMiss = 0;
  for (let i = 0; i < barnProbabilities.length; i++) {
    const p = barnProbabilities[i]!;
    requireProbability(`barnProbabilities[${i}]`, p);
    if (p === 1) return 1;
    logMiss += Math.log1p(-p);
  }
  return 0 - Math.expm1(logMiss);
}

/**
 * Barn-level detection confidence needed in each of k similar barns for a site target C:
 * p = 1 - (1 - C)^(1/k), computed as -expm1(log1p(-C) / k), which keeps the digits that
 * 1 - (1 - C)^(1/k) loses for small C. The planner sizes each barn to it when a site target
 * is met with D of the site's barns infected (k = D).
 *
 * @param siteTarget C in [0, 1]. @param barns k (integer >= 1).
 * @throws RangeError when an argument is out of its domain.
 * @see Martin PAJ, Cameron AR, Greiner M 2007, Prev Vet Med 79:71-97.
 * @example barnTargetForSite(0.996625, 3) // 0.85
 */
export function barnTargetForSite(siteTarget: number, barns: number): number {
  requireProbability('siteTarget', siteTarget);
  requireInteger('barns', barns, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  if (siteTarget === 1) return 1;
  return 0 - Math.expm1(Math.log1p(-siteTarget) / barns);
}
