/**
 * Small exact combinatorics for the permutation nulls: log binomial coefficients and the
 * hypergeometric upper tail, summed in log space.
 */

/**
 * Natural log of n! by summation (n <= 170 is all a barn needs, so a table is exact enough and
 * avoids an approximation error in the last digits that a gamma series would bring).
 */
const LOG_FACTORIAL: number[] = [0];
function logFactorial(n: number): number {
  for (let k = LOG_FACTORIAL.length; k <= n; k++) LOG_FACTORIAL[k] = LOG_FACTORIAL[k - 1]! + Math.log(k);
  return LOG_FACTORIAL[n]!;
}

/**
 * ln C(n, k), the number of ways to choose k of n pens.
 * @param n integer >= 0; @param k integer in [0, n].
 * @throws RangeError on bad arguments.
 */
export function logChoose(n: number, k: number): number {
  if (!Number.isInteger(n) || n < 0) throw new RangeError(`\`n\` must be an integer >= 0, got ${n}`);
  if (!Number.isInteger(k) || k < 0 || k > n) throw new RangeError(`\`k\` must be an integer in [0, n], got ${k}`);
  return logFactorial(n) - logFactorial(k) - logFactorial(n - k);
}

/**
 * Hypergeometric upper tail P(X >= x), X ~ Hyp(population N, successes K, draws n):
 * sum_{t >= x} C(K, t) C(N-K, n-t) / C(N, n). The upper terms are summed directly (never
 * 1 - lower tail, which loses the digits of a small p-value).
 *
 * @example hypergeometricUpperTail(1, 5, 1, 2) // 0.4 = 1 - C(4,2)/C(5,2) (test/spatial/localJoinCount.test.ts)
 * @param x integer; values below the support give 1, above give 0.
 * @param population N integer >= 0; @param successes K in [0, N]; @param draws n in [0, N].
 * @throws RangeError on bad arguments.
 * @see Johnson N.L., Kemp A.W., Kotz S. (2005) Univariate Discrete Distributions, ch. 6.
 */
export function hypergeometricUpperTail(x: number, population: number, successes: number, draws: number): number {
  if (!Number.isInteger(population) || population < 0)
    throw new RangeError(`\`population\` must be an integer >= 0, got ${population}`);
  if (!Number.isInteger(successes) || successes < 0 || successes > population)
    throw new RangeError(`\`successes\` must be an integer in [0, population], got ${successes}`);
  if (!Number.isInteger(draws) || draws < 0 || draws > population)
    throw new RangeError(`\`draws\` must be an integer in [0, population], got ${draws}`);
  if (!Number.isInteger(x)) throw new RangeError(`\`x\` must be an integer, got ${x}`);
  const lo = Math.max(0, draws - (population - successes));
  const hi = Math.min(successes, draws);
  if (x <= lo) return 1;
  if (x > hi) return 0;
  const logTotal = logChoose(population, draws);
  let sum = 0;
  for (let t = x; t <= hi; t++)
    sum += Math.exp(logChoose(successes, t) + logChoose(population - successes, draws - t) - logTotal);
  return Math.min(1, sum);
}
