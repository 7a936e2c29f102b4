import type { PairedRatio } from './pairs.js';

/** A product target a row is held against, and whether this run met it. */
export interface Target {
  /** The target as the product states it, e.g. "<= 1.3x the 5-round drop's CPU". */
  text: string;
  met: boolean;
}

/** One measured quantity from a benchmark part, with its same-run baseline when there is one. */
export interface BenchRow {
  name: string;
  value: number;
  unit: string;
  /** The same work done by the reference implementation, in the same unit, in the same run. */
  baseline?: number;
  /** value / baseline (below 1: faster than the baseline); the median CPU-time ratio when `paired` is set. */
  ratio?: number;
  /**
   * How the ratio was measured: alternating pairs (baseline, subject, baseline, subject ...), medians
   * of CPU and wall time per side, and the median and range of the per-pair CPU and wall ratios.
   */
  paired?: PairedRatio;
  /** The product's target for this figure, where it has one. */
  target?: Target;
  /** Figures beside the value for the JSON (files and bytes written, peak RSS in MiB ...). */
  figures?: Record<string, number>;
  note?: string;
}

/** What `npm run bench` passes every part. */
export interface PartOptions {
  /** `--small`: sizes that prove the part works in a minute or two, not the sizes the targets name. */
  small: boolean;
}
