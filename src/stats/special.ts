/**
 * Special functions the kernels share: log-factorial sums that stay exact to ~1e-13 for
 * populations of 100,000 pens, and the log-gamma function for real arguments.
 */

const HALF_LOG_TWO_PI = 0.5 * Math.log(2 * Math.PI);

/** Below this, the Stirling correction comes from a table of exact log-factorials. */
const STIRLING_TABLE_SIZE = 16;

/**
 * Stirling's error term delta(m) = ln(m!) - [m ln m - m + 0.5 ln(2 pi m)] for m = 1..15,
 * from exact log-factorials (a sum of at most 15 logs, so ~1e-15 absolute).
 */
const STIRLING_TABLE: Float64Array = (() => {
  const table = new Float64Array(STIRLING_TABLE_SIZE);
  let logFactorial = 0;
  for (let m = 1; m < STIRLING_TABLE_SIZE; m++) {
    logFactorial += Math.log(m);
    table[m] = logFactorial - (m * Math.log(m) - m + HALF_LOG_TWO_PI + 0.5 * Math.log(m));
  }
  return table;
})();

/**
 * Stirling's error term delta(m) for a positive integer m:
 * ln(m!) = m ln m - m + 0.5 ln(2 pi m) + delta(m), with the asymptotic series
 * delta(m) = 1/(12m) - 1/(360m^3) + 1/(1260m^5) - 1/(1680m^7) + 1/(1188m^9) - 691/(360360m^11)
 * for m >= 16 (the next term is below 2e-18 there) and a table below.
 * @see Abramowitz M, Stegun IA 1964, Handbook of Mathematical Functions, 6.1.40 (Stirling series).
 */
export function stirlingError(m: number): number {
  if (m < STIRLING_TABLE_SIZE) return STIRLING_TABLE[m]!;
  const inv = 1 / m;
  const inv2 = inv * inv;
  return (
    inv *
    (1 / 12 - inv2 * (1 / 360 - inv2 * (1 / 1260 - inv2 * (1 / 1680 - inv2 * (1 / 1188 - inv2 * (691 / 360360))))))
  );
}

/**
 * Balanced sum of log-factorials, sum_i s_i ln(m_i!), for non-negative integers m_i whose signed
 * sum is zero (sum_i s_i m_i = 0), which every ratio of binomial coefficients in a hypergeometric
 * probability is.
 *
 * Why: ln(100000!) is about 1.05e6, so subtracting four log-gammas keeps only ~1e-10 of the
 * answer. Writing each term by Stirling as m ln(m/B) + m ln B - m + 0.5 ln(2 pi m) + delta(m)
 * with a common base B, the `m ln B` and `-m` parts cancel exactly (the m_i are balanced), and
 * what remains is of the size of the answer. `m ln(m/B)` uses log1p of the exact integer
 * difference when m is near B, so a term like (N-d) ln((N-d)/N) keeps all its digits.
 *
 * @param signs +1 or -1 per term.
 * @param values the m_i (integers >= 0); m = 0 contributes ln(0!) = 0.
 * @returns the sum, in nats.
 * @see Loader C 2000, Fast and accurate computation of binomial probabilities (the Stirling-error idea).
 */
export function balancedLogFactorialSum(signs: readonly number[], values: readonly number[]): number {
  let base = 1;
  for (const m of values) if (m > base) base = m;
  let total = 0;
  for (let i = 0; i < values.length; i++) {
    const m = values[i]!;
    if (m === 0) continue;
    total += signs[i]! * stirlingTerm(m, base);
  }
  return total;
}

/** One Stirling-form term m ln(m/B) + 0.5 ln(2 pi m) + delta(m) of a balanced sum (m >= 1). */
function stirlingTerm(m: number, base: number): number {
  const logRatio = 2 * m >= base ? Math.log1p((m - base) / base) : Math.log(m / base);
  return m * logRatio + HALF_LOG_TWO_PI + 0.5 * Math.log(m) + stirlingError(m);
}

/**
 * ln[C(N-d, n) / C(N, n)] = ln (N-d)! - ln (N-d-n)! - ln N! + ln (N-n)!, the balanced sum of
 * balancedLogFactorialSum written out for the four terms of the hot path (no arrays).
 * Caller guarantees integers 0 <= n, d and n + d <= N.
 */
export function logHypergeometricZero(N: number, d: number, n: number): number {
  const rest = N - d - n;
  return (
    stirlingTerm(N - d, N) - (rest === 0 ? 0 : stirlingTerm(rest, N)) - stirlingTerm(N, N) + stirlingTerm(N - n, N)
  );
}

/**
 * Natural log of the hypergeometric probability Hyp(x; N, K, n) = C(K, x) C(N-K, n-x) / C(N, n):
 * x marked items among n drawn without replacement from N of which K are marked.
 * Caller guarantees integers with max(0, n+K-N) <= x <= min(n, K).
 * @see Johnson NL, Kemp AW, Kotz S 2005, Univariate Discrete Distributions, ch. 6.
 */
export function logHypergeometricPmf(x: number, N: number, K: number, n: number): number {
  return balancedLogFactorialSum(
    [1, -1, -1, 1, -1, -1, -1, 1, 1],
    [K, x, K - x, N - K, n - x, N - K - n + x, N, n, N - n],
  );
}

/** Lanczos coefficients, g = 7, n = 9 (the widely tabulated set). */
const LANCZOS_G = 7;
const LANCZOS = [
  0.99999999999980993, 676.5203681218851, -1259.1392167224028, 771.32342877765313, -176.61502916214059,
  12.507343278686905, -0.13857109526572012, 9.9843695780195716e-6, 1.5056327351493116e-7,
];

/**
 * Natural log of the gamma function for x > 0 (Lanczos approximation, relative error ~1e-15;
 * reflection is not needed because every caller has positive arguments).
 * @throws RangeError when x is not a positive finite number.
 * @see Lanczos C 1964, A precision approximation of the gamma function, SIAM J Numer Anal B 1:86-96.
 */
export function logGamma(x: number): number {
  if (!(x > 0) || !Number.isFinite(x)) throw new RangeError(`\`x\` must be a number in (0, Infinity), got ${x}`);
  if (x < 0.5) {
    // ln Gamma(x) = ln Gamma(x + 1) - ln x keeps the series in its accurate range.
    return logGamma(x + 1) - Math.log(x);
  }
  const z = x - 1;
  let a = LANCZOS[0]!;
  const t = z + LANCZOS_G + 0.5;
  for (let i = 1; i < LANCZOS.length; i++) a += LANCZOS[i]! / (z + i);
  return HALF_LOG_TWO_PI + (z + 0.5) * Math.log(t) - t + Math.log(a);
}

/** ln B(a, b) = ln Gamma(a) + ln Gamma(b) - ln Gamma(a + b), for a, b > 0. */
export function logBeta(a: number, b: number): number {
  return logGamma(a) + logGamma(b) - logGamma(a + b);
}
