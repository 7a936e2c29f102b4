/**
 * Benchmark of the detection engine (src/stats) against @stdlib, in the same run on the same inputs,
 * as alternating pairs (@stdlib, ours, @stdlib, ours ...) with CPU time beside wall time.
 * Setup (grids, factories) stays outside the timed parts; each part returns a checksum so the work
 * cannot be optimised away.
 *
 *   npx tsx bench/stats.ts
 */
import { pathToFileURL } from 'node:url';
import hypergeometricCdf from '@stdlib/stats-base-dists-hypergeometric-cdf';
import hypergeometricPmf from '@stdlib/stats-base-dists-hypergeometric-pmf';
import { hypergeometricDetection, imperfectDetection, sampleSize } from '../src/stats/index.js';
import { randomInt, seededRng } from '../src/util/random.js';
import { pairedRow } from './pairedRow.js';
import type { BenchRow, PartOptions } from './types.js';

const SEED = 4242;
const EVALUATIONS = 1_000_000;

interface Triple {
  N: number;
  n: number;
  d: number;
}

/** Barns from 10 to 100,000 pens, log-uniform, with n and d anywhere in [0, N]. */
function detectionGrid(size: number, maxPens: number): Triple[] {
  const rng = seededRng(SEED);
  const grid: Triple[] = [];
  for (let i = 0; i < size; i++) {
    const N = Math.max(1, Math.round(10 * (maxPens / 10) ** rng()));
    const n = randomInt(rng, N + 1);
    const d = randomInt(rng, N + 1);
    grid.push({ N, n, d });
  }
  return grid;
}

/**
 * Times the detection engine against @stdlib on the same seeded inputs in the same run, as
 * alternating pairs: 1,000,000 perfect-rope evaluations (vs 1 - hypergeometric cdf(0)), 20,000
 * imperfect-rope evaluations (vs summing @stdlib pmf terms), 20,000 sample-size questions (vs the
 * same binary search on @stdlib); a tenth of each with `small`. Rows carry CPU ns (or us) per
 * evaluation, the baseline, the CPU and wall ratios (median and range) and checksums.
 */
export async function benchStats(options: PartOptions = { small: false }): Promise<BenchRow[]> {
  const share = options.small ? 10 : 1;
  const pairs = options.small ? 3 : 5;
  return [perfectRopeRow(share, pairs), imperfectRopeRow(share, pairs), sampleSizeRow(share, pairs)];
}

/** 1,000,000 / `share` perfect-rope evaluations: 1,000 grid points x 1,000 / `share` passes. */
function perfectRopeRow(share: number, pairs: number): BenchRow {
  const grid = detectionGrid(1000, 100_000);
  const evaluations = EVALUATIONS / share;
  const passes = evaluations / grid.length;
  return pairedRow({
    name: 'detection, perfect rope (hypergeometric), N <= 100,000',
    unit: 'CPU ns/eval',
    scale: (ms) => (ms * 1e6) / evaluations,
    pairs,
    ours: () => {
      let sum = 0;
      for (let p = 0; p < passes; p++) for (const t of grid) sum += hypergeometricDetection(t.N, t.n, t.d);
      return sum;
    },
    baseline: () => {
      let sum = 0;
      // P(detect) = 1 - P(X = 0), X ~ Hyp(N, d, n), the @stdlib way.
      for (let p = 0; p < passes; p++) for (const t of grid) sum += 1 - hypergeometricCdf(0, t.N, t.d, t.n);
      return sum;
    },
  });
}

/** Imperfect rope: ours vs summing @stdlib pmf terms, on barns up to 1,000 pens. */
function imperfectRopeRow(share: number, pairs: number): BenchRow {
  const small = detectionGrid(500, 1000);
  const imperfectCount = 20_000 / share;
  const imperfectPasses = Math.max(1, imperfectCount / small.length);
  return pairedRow({
    name: 'detection, imperfect rope Se=0.8 (Cameron & Baldock), N <= 1,000',
    unit: 'CPU ns/eval',
    scale: (ms) => (ms * 1e6) / (imperfectPasses * small.length),
    pairs,
    ours: () => {
      let sum = 0;
      for (let p = 0; p < imperfectPasses; p++) for (const t of small) sum += imperfectDetection(t.N, t.n, t.d, 0.8);
      return sum;
    },
    baseline: () => {
      let sum = 0;
      for (let p = 0; p < imperfectPasses; p++) {
        for (const t of small) {
          let s = 0;
          for (let x = Math.max(0, t.n + t.d - t.N); x <= Math.min(t.n, t.d); x++)
            s += hypergeometricPmf(x, t.N, t.d, t.n) * (1 - 0.2 ** x);
          sum += s;
        }
      }
      return sum;
    },
  });
}

/** Sample size: ours vs the same binary search on @stdlib, over barns, designs and targets. */
function sampleSizeRow(share: number, pairs: number): BenchRow {
  const rng = seededRng(SEED + 1);
  const questions: { N: number; d: number; C: number }[] = [];
  for (let i = 0; i < 20_000 / share; i++) {
    const N = Math.max(2, Math.round(10 * 1000 ** rng()));
    questions.push({
      N,
      d: 1 + randomInt(rng, Math.max(1, Math.floor(N / 5))),
      C: [0.9, 0.95, 0.99][randomInt(rng, 3)]!,
    });
  }
  return pairedRow({
    name: 'sample size, perfect rope, N <= 10,000 (binary search)',
    unit: 'CPU us/question',
    scale: (ms) => (ms * 1e3) / questions.length,
    pairs,
    // The checksums may differ by a few ropes: @stdlib rounds some exact ties below the target
    // (N=20, d=1, n=18: 18/20 = 0.9 exactly, @stdlib 0.899999999999999), where ropewatch is exact.
    note: 'checksums (ropes) may differ by a few: @stdlib rounds some exact ties below the target',
    ours: () => {
      let sum = 0;
      for (const q of questions) sum += sampleSize({ pens: q.N, infected: q.d, confidence: q.C }).sampled ?? -1;
      return sum;
    },
    baseline: () => {
      let sum = 0;
      for (const q of questions) {
        let low = -1;
        let high = q.N;
        while (high - low > 1) {
          const mid = Math.floor((low + high) / 2);
          if (1 - hypergeometricCdf(0, q.N, q.d, mid) >= q.C) high = mid;
          else low = mid;
        }
        sum += high;
      }
      return sum;
    },
  });
}

if (process.argv[1] !== undefined && import.meta.url === pathToFileURL(process.argv[1]).href) {
  const rows = await benchStats({ small: process.argv.includes('--small') });
  for (const r of rows) {
    const base = r.baseline === undefined ? '' : `  baseline ${r.baseline.toFixed(1)}  ratio ${r.ratio!.toFixed(3)}`;
    console.log(`${r.name}: ${r.value.toFixed(1)} ${r.unit}${base}  (${r.note ?? ''})`);
  }
  console.log(JSON.stringify(rows, null, 2));
}
