/**
 * Hypergeometric random variates by inversion of the distribution function.
 */
import { logHypergeometricPmf } from './special.js';
import { requireInteger } from './validate.js';

/**
 * A sampler of X ~ Hyp(N, K, n), the marked items among n drawn without replacement from N of
 * which K are marked, by inversion: X = min{ x : u < F(x) } for u uniform on [0, 1), with
 * F(x) = sum_{j <= x} Hyp(j; N, K, n) tabulated once over the support
 * [max(0, n + K - N), min(n, K)] and searched in order from the lowest value (the sequential
 * search of the inversion algorithm). Inversion of the exact distribution function gives a
 * variate with exactly that distribution for an exactly uniform u (Devroye 1986, section II.2);
 * here the only departures are the rounding of F (terms from logHypergeometricPmf, relative
 * error about 1e-13) and the 2^-32 grid of a 32-bit generator's u. It replaces placing n items
 * one by one (a partial Fisher-Yates shuffle) and counting the marked among them, which has the
 * same distribution and costs n draws instead of one.
 *
 * @param population N, integer >= 0.
 * @param marked K, integer in [0, N].
 * @param drawn n, integer in [0, N].
 * @returns the variate for one uniform u in [0, 1) (one call per variate; u outside [0, 1) is
 *   the caller's error and gives the support's ends).
 * @throws RangeError on a bad N, K or n.
 * @see Devroye L. (1986) Non-Uniform Random Variate Generation, Springer, ch. II.2 (inversion)
 *   and III.2 (sequential search for discrete distributions).
 * @see Kachitvichyanukul V., Schmeiser B.W. (1985) Computer generation of hypergeometric random
 *   variates, J. Statist. Comput. Simul. 22:127-145 (inversion, their algorithm HIN).
 * @example hypergeometricInversion(80, 6, 10)(0) // 0, the lowest value of the support
 */
export function hypergeometricInversion(population: number, marked: number, drawn: number): (u: number) => number {
  requireInteger('population', population, 0, Number.MAX_SAFE_INTEGER, '[0, Infinity)');
  requireInteger('marked', marked, 0, population);
  requireInteger('drawn', drawn, 0, population);
  const lowest = Math.max(0, drawn + marked - population);
  const highest = Math.min(drawn, marked);
  // cdf[i] = F(lowest + i); the last entry is Infinity so the search always stops inside the
  // support, whatever the rounding of the sum (F(highest) = 1 in exact arithmetic).
  const cdf = new Float64Array(highest - lowest + 1);
  let total = 0;
  for (let x = lowest; x < highest; x++) {
    total += Math.exp(logHypergeometricPmf(x, population, marked, drawn));
    cdf[x - lowest] = total;
  }
  cdf[highest - lowest] = Number.POSITIVE_INFINITY;
  return (u: number) => {
    let i = 0;
    while (u >= cdf[i]!) i++;
    return lowest + i;
  };
}
