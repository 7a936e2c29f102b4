/**
 * A row from alternating pairs of in-process work: each side returns a checksum (so nothing is
 * optimised away), the value and baseline are the medians of the sides' CPU times scaled to the
 * row's unit, and the ratio is the median of the per-pair CPU-time ratios.
 */
import { describePair, pairedRatio } from './pairs.js';
import type { BenchRow, Target } from './types.js';

export interface PairedWork {
  name: string;
  /** e.g. 'CPU ns/eval'. */
  unit: string;
  /** Converts one side's CPU milliseconds into the unit (e.g. ms -> ns per evaluation). */
  scale: (cpuMs: number) => number;
  ours: () => number;
  baseline: () => number;
  pairs: number;
  note?: string;
  target?: (row: BenchRow) => Target;
}

export function pairedRow(work: PairedWork): BenchRow {
  let oursChecksum = Number.NaN;
  let baseChecksum = Number.NaN;
  const paired = pairedRatio(
    () => {
      oursChecksum = work.ours();
    },
    () => {
      baseChecksum = work.baseline();
    },
    work.pairs,
  );
  const row: BenchRow = {
    name: work.name,
    value: work.scale(paired.ours.cpuMs),
    unit: work.unit,
    baseline: work.scale(paired.baseline.cpuMs),
    ratio: paired.cpuRatio.median,
    paired,
    note: `${work.note ? `${work.note}; ` : ''}${describePair(paired)}; checksum ${oursChecksum.toPrecision(12)}, baseline checksum ${baseChecksum.toPrecision(12)}`,
  };
  if (work.target) row.target = work.target(row);
  return row;
}
