/**
 * A probability as a percentage for people: one decimal, and never "100.0%" or "0.0%" for a value
 * that is not exactly 1 or 0 (a 99.96% freedom is not certainty, and saying so matters).
 */
export function formatPercent(p: number): string {
  if (p > 0.999 && p < 1) return '>99.9%';
  if (p > 0 && p < 0.001) return '<0.1%';
  return `${(100 * p).toFixed(1)}%`;
}

/** A p-value as the pages write it: three decimals, or "< 0.001" below that. */
export function formatPValue(p: number): string {
  return p < 0.001 ? '< 0.001' : p.toFixed(3);
}
