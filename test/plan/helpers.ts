/**
 * Local detection models to feed the planner kernels in tests (the planner never imports
 * src/stats). Written from the published formulas, independently of src/stats.
 */
import { expandLayout, type BarnLayout } from '../../src/domain/layout.js';

/** C(n, k) by the multiplicative formula; exact for the small barns used in tests. */
export function choose(n: number, k: number): number {
  if (k < 0 || k > n) return 0;
  let c = 1;
  for (let i = 1; i <= k; i++) c = (c * (n - k + i)) / i;
  return c;
}

/** Perfect test, finite barn: 1 - C(N-d, n) / C(N, n) (Cameron & Baldock 1998, Prev Vet Med 34:1-17 (hypergeometric form)). */
export function hypergeometricDetect(pens: number, infected: number, ropes: number): number {
  return 1 - choose(pens - infected, ropes) / choose(pens, ropes);
}

/** Imperfect rope: sum_x Hyp(x; N, d, n) [1 - (1-Se)^x] (Cameron & Baldock 1998, Prev Vet Med 34:1-17). */
export function imperfectDetect(pens: number, infected: number, ropes: number, se: number): number {
  let p = 0;
  for (let x = 0; x <= Math.min(infected, ropes); x++) {
    const hyp = (choose(infected, x) * choose(pens - infected, ropes - x)) / choose(pens, ropes);
    p += hyp * (1 - (1 - se) ** x);
  }
  return p;
}

/** A layout with defaults for tests: rows x pensPerRow, per-row labels A, B, C, D. */
export function layout(rows: number, pensPerRow: number, extra: Partial<BarnLayout> = {}): BarnLayout {
  return {
    rows,
    pensPerRow,
    numbering: 'per-row',
    rowLabels: ['A', 'B', 'C', 'D'].slice(0, rows),
    padDigits: 0,
    penWidth: 1,
    penDepth: 1,
    alleyWidth: 1,
    gapsAfter: [],
    gapWidth: 1,
    empty: [],
    outOfUse: [],
    ...extra,
  };
}

export function pensOf(rows: number, pensPerRow: number, extra: Partial<BarnLayout> = {}) {
  return expandLayout(layout(rows, pensPerRow, extra));
}

/** All k-subsets of items, in lexicographic order. */
export function* subsets<T>(items: readonly T[], k: number, start = 0, prefix: T[] = []): Generator<T[]> {
  if (prefix.length === k) {
    yield [...prefix];
    return;
  }
  for (let i = start; i < items.length; i++) {
    prefix.push(items[i]!);
    yield* subsets(items, k, i + 1, prefix);
    prefix.pop();
  }
}
