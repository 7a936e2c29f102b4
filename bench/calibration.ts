/**
 * A fixed CPU-bound workload, timed in the same run as a figure with an absolute target, so that a
 * reader can tell a slow or busy machine from a slow program: its work never changes with the
 * product (it imports nothing from src/), so its CPU time compares machines and runs, and its wall
 * time against its CPU time shows how busy the machine was. It mixes what the product's outputs
 * spend time on: floating-point loops with logarithms (the statistics), shuffles of small arrays
 * (permutation tests), sorting, and building and serialising many small objects (the files).
 * About 0.85 s of CPU on the project's 2-core machine (one run while the machine was busy;
 * a figure to read the spread of runs by, not a reference value).
 */
import { timeOnce, type Timing } from './pairs.js';

/** xorshift32 (Marsaglia 2003, "Xorshift RNGs"), fixed seed: the same work every run. */
function xorshift(seed: number): () => number {
  let x = seed >>> 0 || 1;
  return () => {
    x ^= x << 13;
    x >>>= 0;
    x ^= x >>> 17;
    x ^= x << 5;
    x >>>= 0;
    return x / 4294967296;
  };
}

/** Runs the workload once; returns a checksum so that none of it can be optimised away. */
export function calibrationWork(): number {
  const rng = xorshift(20_261_203);
  let checksum = 0;
  // Floating point with logarithms: 8 million terms.
  for (let i = 0; i < 8_000_000; i++) checksum += Math.log1p(rng()) * 1e-6;
  // 80,000 Fisher-Yates shuffles of 80 values with a running cross-product.
  const values = Float64Array.from({ length: 80 }, (_, i) => i % 7);
  for (let k = 0; k < 80_000; k++) {
    for (let i = values.length - 1; i > 0; i--) {
      const j = Math.floor(rng() * (i + 1));
      const t = values[i]!;
      values[i] = values[j]!;
      values[j] = t;
    }
    checksum += values[0]! * values[1]! * 1e-6;
  }
  // Sort 200,000 numbers six times.
  for (let r = 0; r < 6; r++) {
    const numbers = Float64Array.from({ length: 200_000 }, () => rng());
    numbers.sort();
    checksum += numbers[100_000]!;
  }
  // 300,000 small records serialised to JSON.
  const records = Array.from({ length: 300_000 }, (_, i) => ({
    pen: `A${i % 50}`,
    ct: rng() * 40,
    positive: i % 9 === 0,
  }));
  checksum += JSON.stringify(records).length * 1e-9;
  return checksum;
}

/** Times one run of the workload in this process. */
export function calibrate(): Timing & { checksum: number } {
  let checksum = 0;
  const timing = timeOnce(() => {
    checksum = calibrationWork();
  });
  return { ...timing, checksum };
}

export const CALIBRATION_TEXT =
  'calibration: a fixed CPU-bound workload (logarithms, shuffles, sorting, JSON) that never changes with the program';
