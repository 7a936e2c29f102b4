/**
 * The product's performance targets, in one place, and how a row is held against them. A target
 * on a ratio is judged on the median of the alternating pairs' CPU-time ratios (wall-time ratios
 * swing with the load on a shared machine); an absolute target on time is judged on wall time and
 * printed beside CPU time and a same-run calibration.
 */
import type { BenchRow, Target } from './types.js';

export const TARGETS = Object.freeze({
  /** One more export at a long history costs at most this times the same drop at 5 rounds. */
  historyDropRatio: 1.3,
  /** `ropewatch report` of 2,000 site-rounds with the program defaults, seconds of wall time. */
  recomputeSeconds: 30,
  /** Ingest of 1M rows: at least this fraction of the keyed floor's rows/s ... */
  ingestRateOfFloor: 0.8,
  /** ... at most this times the floor's CPU time. */
  ingestCpuOfFloor: 1.3,
  /** Ingest's peak memory from 1M to 2M rows: at most this ratio (flat within 10%). */
  ingestMemoryGrowth: 1.1,
  /** Peak resident memory of `report` and of a 50-site drop, MiB. */
  peakRssMiB: 500,
  /** Moran's I permutation test: at least this many times faster than R spdep (estimated). */
  moranSpeedUp: 100,
});

export function atMost(value: number, limit: number, text: string): Target {
  return { text, met: value <= limit };
}

export function atLeast(value: number, limit: number, text: string): Target {
  return { text, met: value >= limit };
}

export function below(value: number, limit: number, text: string): Target {
  return { text, met: value < limit };
}

/**
 * Targets for rows of parts that do not state their own (bench/ingest.ts): the 1M-row ingest
 * against the keyed floor, and its peak memory flat from 1M to 2M rows. Rows are recognised by
 * name and unit; a row that already carries a target keeps it.
 */
export function withDefaultTarget(part: string, row: BenchRow): BenchRow {
  if (row.target !== undefined || part !== 'ingest' || row.ratio === undefined) return row;
  if (/peak RSS/i.test(row.name) && /\b2M\b|2,000,000/.test(row.name))
    return {
      ...row,
      target: atMost(row.ratio, TARGETS.ingestMemoryGrowth, 'within 10% of the 1M-row peak'),
    };
  if (!/\b1M\b|1,000,000/.test(row.name) || /peak RSS/i.test(row.name)) return row;
  if (/cpu/i.test(row.unit) || /\bCPU\b/.test(row.name))
    return {
      ...row,
      target: atMost(row.ratio, TARGETS.ingestCpuOfFloor, `<= ${TARGETS.ingestCpuOfFloor}x the floor's CPU time`),
    };
  if (row.unit === 'rows/s') {
    const cpu = row.paired?.cpuRatio.median;
    // rows/s against the floor: higher is better; when the pairs carry CPU times, hold both.
    const rateMet = row.ratio >= TARGETS.ingestRateOfFloor;
    const cpuMet = cpu === undefined || cpu <= TARGETS.ingestCpuOfFloor;
    return {
      ...row,
      target: {
        text: `>= ${TARGETS.ingestRateOfFloor} of the floor's rows/s${cpu === undefined ? '' : ` and <= ${TARGETS.ingestCpuOfFloor}x its CPU`}`,
        met: rateMet && cpuMet,
      },
    };
  }
  return row;
}
