/** One measured quantity from a benchmark part, with its same-run baseline when there is one. */
export interface BenchRow {
  name: string;
  value: number;
  unit: string;
  /** The same work done by the reference implementation, in the same unit, in the same run. */
  baseline?: number;
  /** value / baseline (below 1: faster than the baseline). */
  ratio?: number;
  note?: string;
}
