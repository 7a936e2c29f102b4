/**
 * A probability as a percentage for people, with one decimal ("95.0%"), or "n/a" when there is no
 * finite value. One decimal would print 0.99996 as "100.0%" and 0.00004 as "0.0%": a certainty and
 * an impossibility that the value is not. Only then, when the one-decimal text is "100.0" or "0.0"
 * and the value is not exactly 1 or 0, it reads "> 99.9%" or "< 0.1%"; every other value keeps its
 * one-decimal text (0.9993 is "99.9%").
 */
export function formatPercent(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return 'n/a';
  const text = (100 * p).toFixed(1);
  if (text === '100.0' && p < 1) return '> 99.9%';
  if (text === '0.0' && p > 0) return '< 0.1%';
  return `${text}%`;
}

/**
 * A fraction as a percentage to three significant figures, trailing zeros dropped ("95%", "12.3%",
 * "0.0123%"), for the `calc` sentences, which print the exact value beside it. Unlike
 * formatPercent it has no "> 99.9%" guard: 0.99996 reads "100%" next to its six-digit value.
 */
export function formatPercentSignificant(fraction: number): string {
  return `${Number((fraction * 100).toPrecision(3))}%`;
}

/** A p-value as the pages and alerts word it: three decimals, "< 0.001" below that, or "n/a". */
export function formatPValue(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return 'n/a';
  return p < 0.001 ? '< 0.001' : p.toFixed(3);
}

/**
 * A join count's p-value with how it was found: "exact p = 0.012" when every placement of the
 * positives was counted, "permutation p = 0.012" when they were sampled (Monte Carlo).
 */
export function formatJoinCountP(method: 'exact' | 'monte-carlo', p: number | null | undefined): string {
  return `${method === 'exact' ? 'exact' : 'permutation'} p = ${formatPValue(p)}`;
}
