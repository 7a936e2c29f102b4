import { expect } from 'vitest';

/**
 * Asserts |actual - expected| <= max(abs, rel * |expected|), naming the inputs in the failure.
 * Use instead of toBeCloseTo, which counts decimal places and means nothing for a probability of 1e-8.
 */
export function expectClose(
  actual: number,
  expected: number,
  tolerance: { rel?: number; abs?: number },
  label: string,
): void {
  const rel = tolerance.rel ?? 0;
  const abs = tolerance.abs ?? 0;
  const allowed = Math.max(abs, rel * Math.abs(expected));
  const diff = Math.abs(actual - expected);
  if (!(diff <= allowed)) {
    expect.fail(`${label}: expected ${expected}, got ${actual} (|diff| ${diff} > allowed ${allowed})`);
  }
}
