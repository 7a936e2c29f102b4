/**
 * Benchmark of src/spatial against straightforward unoptimised versions written here (dense
 * matrices, array copies per permutation), measured in the same run on the same inputs: a
 * 2 x 40 pen barn with every pen roped, 999-permutation join-count and Moran tests, the
 * Bernoulli scan with 999 replicates, and 10,000 simulated outbreaks with the detection of one
 * rope set. Each comparison runs as alternating pairs (reference, ours, reference, ours ...) with
 * CPU time beside wall time; fast kernels repeat inside a timed sample, the same count on both
 * sides, so that one sample is well above the clock's useful resolution on a loaded machine.
 * Setup stays outside the timed parts; each part returns a checksum.
 *
 *   npx tsx bench/spatial.ts
 */
import { pathToFileURL } from 'node:url';
import type { BarnLayout } from '../src/domain/layout.js';
import { expandLayout } from '../src/domain/layout.js';
import {
  bernoulliScan,
  contactWeights,
  denseWeights,
  detectionProbability,
  joinCountTest,
  moranTest,
  simulateOutbreaks,
} from '../src/spatial/index.js';
import { seededRng, type Rng } from '../src/util/random.js';
import { pairedRow } from './pairedRow.js';
import { atLeast, TARGETS } from './targets.js';
import type { BenchRow, PartOptions } from './types.js';

const SEED = 2026;
const PERMUTATIONS = 999;
const REALISATIONS = 10_000;

const layout: BarnLayout = {
  rows: 2,
  pensPerRow: 40,
  numbering: 'per-row',
  rowLabels: ['A', 'B'],
  padDigits: 0,
  penWidth: 1,
  penDepth: 1,
  alleyWidth: 0.5,
  gapsAfter: [],
  gapWidth: 1,
  empty: [],
  outOfUse: [],
};

function shuffled<T>(items: readonly T[], rng: Rng): T[] {
  const copy = items.slice();
  for (let i = copy.length - 1; i > 0; i--) {
    const j = Math.floor(rng() * (i + 1));
    [copy[i], copy[j]] = [copy[j]!, copy[i]!];
  }
  return copy;
}

// ---- naive reference implementations (dense, copying) ----

function naiveJoinCountP(W: number[][], x: number[], m: number, rng: Rng): number {
  const bb = (v: number[]) => {
    let s = 0;
    for (let i = 0; i < v.length; i++) for (let j = 0; j < v.length; j++) s += 0.5 * W[i]![j]! * v[i]! * v[j]!;
    return s;
  };
  const obs = bb(x);
  let b = 0;
  for (let k = 0; k < m; k++) if (bb(shuffled(x, rng)) >= obs - 1e-9) b++;
  return (1 + b) / (1 + m);
}

function naiveMoranP(W: number[][], x: number[], m: number, rng: Rng): number {
  const I = (v: number[]) => {
    const n = v.length;
    const mean = v.reduce((s, t) => s + t, 0) / n;
    const z = v.map((t) => t - mean);
    let num = 0;
    let s0 = 0;
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        num += W[i]![j]! * z[i]! * z[j]!;
        s0 += W[i]![j]!;
      }
    return (n / s0) * (num / z.reduce((s, t) => s + t * t, 0));
  };
  const obs = I(x);
  let b = 0;
  for (let k = 0; k < m; k++) if (I(shuffled(x, rng)) >= obs - 1e-9) b++;
  return (1 + b) / (1 + m);
}

/**
 * The permutation loop that shuffles every pen's value each time (a full Fisher-Yates shuffle and
 * the sparse lag over all n pens): the way Moran's I was permuted before the partial placement.
 */
function fullShuffleMoranP(
  offsets: Int32Array,
  neighbours: Int32Array,
  weights: Float64Array,
  x: readonly number[],
  m: number,
  rng: Rng,
): number {
  const n = x.length;
  const mean = x.reduce((s, t) => s + t, 0) / n;
  const z = Float64Array.from(x, (t) => t - mean);
  const cross = (v: Float64Array) => {
    let s = 0;
    for (let i = 0; i < n; i++) {
      let lag = 0;
      for (let a = offsets[i]!; a < offsets[i + 1]!; a++) lag += weights[a]! * v[neighbours[a]!]!;
      s += v[i]! * lag;
    }
    return s;
  };
  const obs = cross(z);
  const threshold = obs - 1e-9 * Math.max(1, Math.abs(obs));
  const perm = Float64Array.from(z);
  let b = 0;
  for (let k = 0; k < m; k++) {
    for (let i = n - 1; i > 0; i--) {
      const j = Math.floor(rng() * (i + 1));
      const tmp = perm[i]!;
      perm[i] = perm[j]!;
      perm[j] = tmp;
    }
    if (cross(perm) >= threshold) b++;
  }
  return (1 + b) / (1 + m);
}

function naiveScanP(points: { x: number; y: number }[], x: number[], m: number, rng: Rng): number {
  const n = points.length;
  const orders = points.map((p) =>
    points.map((q, j) => ({ j, d: Math.hypot(q.x - p.x, q.y - p.y) })).sort((a, b) => a.d - b.d || a.j - b.j),
  );
  const xlx = (a: number, b: number) => (a === 0 ? 0 : a * Math.log(a / b));
  const maxLlr = (v: number[]) => {
    const C = v.reduce((s, t) => s + t, 0);
    const base = xlx(C, n) + xlx(n - C, n);
    let best = 0;
    for (const order of orders) {
      for (let size = 1; size <= n / 2; size++) {
        if (size < n && order[size]!.d <= order[size - 1]!.d + 1e-9) continue;
        let c = 0;
        for (let t = 0; t < size; t++) c += v[order[t]!.j]!;
        if (c / size <= (C - c) / (n - size)) continue;
        const llr = xlx(c, size) + xlx(size - c, size) + xlx(C - c, n - size) + xlx(n - size - C + c, n - size) - base;
        if (llr > best) best = llr;
      }
    }
    return best;
  };
  const obs = maxLlr(x);
  let b = 0;
  for (let k = 0; k < m; k++) if (maxLlr(shuffled(x, rng)) >= obs - 1e-9) b++;
  return (1 + b) / (1 + m);
}

function naiveSpreadDetection(
  A: number[][],
  d: number,
  beta: number,
  eps: number,
  ropes: number[],
  se: number,
  realisations: number,
  rng: Rng,
): number {
  const n = A.length;
  let sum = 0;
  for (let r = 0; r < realisations; r++) {
    let infected: boolean[] = new Array<boolean>(n).fill(false);
    infected[Math.floor(rng() * n)] = true;
    let count = 1;
    while (count < d) {
      const next = infected.slice();
      const fresh: number[] = [];
      for (let j = 0; j < n; j++) {
        if (infected[j]) continue;
        let k = 0;
        for (let i = 0; i < n; i++) if (infected[i] && A[i]![j]! > 0) k++;
        if (rng() < 1 - (1 - beta) ** k * (1 - eps)) fresh.push(j);
      }
      for (const j of shuffled(fresh, rng).slice(0, d - count)) next[j] = true;
      count = next.filter(Boolean).length;
      infected = next;
    }
    const ids = infected.map((v, i) => (v ? i : -1)).filter((i) => i >= 0);
    let miss = 1;
    for (const rope of ropes) if (ids.includes(rope)) miss *= 1 - se;
    sum += 1 - miss;
  }
  return sum / realisations;
}

/**
 * R spdep 1.2.7's moran.mc against the full-shuffle permutation loop on this 2 x 40 barn, 999
 * permutations: the loop was 33x faster (one measurement on the project's 2-core machine, not
 * repeated here: R is not part of the bench). The estimated speed-up over spdep is 33 divided by
 * the same-run CPU ratio of the partial placement to the full shuffle.
 */
const SPDEP_OVER_FULL_SHUFFLE = 33;

/** `run` `times` times; returns the last checksum. */
function repeated(times: number, run: () => number): () => number {
  return () => {
    let checksum = 0;
    for (let r = 0; r < times; r++) checksum = run();
    return checksum;
  };
}

const perBarnRound = (times: number) => (ms: number) => ms / times;

/** The 2 x 40 barn: weights (sparse and dense), a cluster of positives, loads and pen centres. */
function barnFixture() {
  const pens = expandLayout(layout);
  const ids = pens.map((p) => p.id);
  const w = contactWeights(layout, ids, 'queen', 'binary');
  // A cluster of 10 positive pens around A10-A14 / B10-B14 plus 4 strays; loads from Ct 22-34.
  const setup = seededRng(SEED);
  const positive = pens.map((p) => (p.position >= 9 && p.position <= 13) || setup() < 0.05);
  const loads = positive.map((pos) => (pos ? 6 + 12 * setup() : 0));
  return {
    ids,
    w,
    W: denseWeights(w),
    positive,
    loads,
    x01: positive.map((b) => (b ? 1 : 0)),
    points: pens.map((p) => ({ id: p.id, x: p.x, y: p.y })),
  };
}

type Barn = ReturnType<typeof barnFixture>;

export async function benchSpatial(options: PartOptions = { small: false }): Promise<BenchRow[]> {
  const barn = barnFixture();
  return [...permutationRows(barn, options), ...scanAndSpreadRows(barn, options)];
}

/** Join-count and Moran's I against dense references; Moran's partial placement against the full shuffle. */
function permutationRows({ w, W, positive, loads, x01 }: Barn, options: PartOptions): BenchRow[] {
  const pairs = options.small ? 3 : 7;
  const rows: BenchRow[] = [];

  rows.push(
    pairedRow({
      name: 'spatial: join-count test, 999 permutations, 2 x 40 barn',
      unit: 'CPU ms per barn-round',
      scale: perBarnRound(20),
      pairs,
      note: 'sparse CSR, partial shuffle vs dense n^2 per permutation; 20 barn-rounds per sample',
      ours: repeated(
        20,
        () => joinCountTest(w, positive, { rng: seededRng(SEED), permutations: PERMUTATIONS }).pPermutation,
      ),
      baseline: repeated(20, () => naiveJoinCountP(W, x01, PERMUTATIONS, seededRng(SEED))),
    }),
  );

  rows.push(
    pairedRow({
      name: "spatial: Moran's I test, 999 permutations, 2 x 40 barn",
      unit: 'CPU ms per barn-round',
      scale: perBarnRound(20),
      pairs,
      note: 'sparse lag vs dense n^2 with array copies; 20 barn-rounds per sample',
      ours: repeated(20, () => moranTest(w, loads, { rng: seededRng(SEED), permutations: PERMUTATIONS }).pPermutation!),
      baseline: repeated(20, () => naiveMoranP(W, loads, PERMUTATIONS, seededRng(SEED))),
    }),
  );

  // 20 barn-rounds per timed sample: one barn-round (about a millisecond) is below the clock's
  // useful resolution on a loaded machine.
  const moran = pairedRow({
    name: "spatial: Moran's I permutations, partial placement vs full shuffle, 999 permutations, 2 x 40 barn",
    unit: 'CPU ms per barn-round',
    scale: perBarnRound(20),
    pairs: options.small ? 5 : 15,
    note: '20 barn-rounds per sample; same exact permutation distribution, different draws for the same seed',
    ours: repeated(20, () => moranTest(w, loads, { rng: seededRng(SEED), permutations: PERMUTATIONS }).pPermutation!),
    baseline: repeated(20, () =>
      fullShuffleMoranP(w.offsets, w.neighbours, w.weights, loads, PERMUTATIONS, seededRng(SEED)),
    ),
  });
  rows.push(moran);
  const speedUp = SPDEP_OVER_FULL_SHUFFLE / moran.paired!.cpuRatio.median;
  rows.push({
    name: "spatial: Moran's I permutation test, estimated speed-up over R spdep 1.2.7 moran.mc",
    value: speedUp,
    unit: 'x',
    note: `${SPDEP_OVER_FULL_SHUFFLE} (spdep over the full shuffle, measured once before, not in this run) / the CPU ratio above (median ${moran.paired!.cpuRatio.median.toFixed(3)}; range ${(SPDEP_OVER_FULL_SHUFFLE / moran.paired!.cpuRatio.max).toFixed(0)}x-${(SPDEP_OVER_FULL_SHUFFLE / moran.paired!.cpuRatio.min).toFixed(0)}x)`,
    target: atLeast(speedUp, TARGETS.moranSpeedUp, `>= ${TARGETS.moranSpeedUp}x R spdep (estimated)`),
  });
  return rows;
}

/** The Bernoulli scan and the spread model against their straightforward references. */
function scanAndSpreadRows({ ids, w, W, positive, x01, points }: Barn, options: PartOptions): BenchRow[] {
  const rows: BenchRow[] = [];

  rows.push(
    pairedRow({
      name: 'spatial: Bernoulli scan, 999 replicates, 2 x 40 barn',
      unit: 'CPU ms per barn-round',
      scale: perBarnRound(1),
      pairs: options.small ? 3 : 5,
      note: 'prefix counts + k ln k table vs recount per window',
      ours: () =>
        bernoulliScan(points, positive, { rng: seededRng(SEED), permutations: PERMUTATIONS }).mostLikely?.p ?? 1,
      baseline: () => naiveScanP(points, x01, PERMUTATIONS, seededRng(SEED)),
    }),
  );

  const ropes = ids.filter((_, i) => i % 4 === 0);
  const ropeIndex = ropes.map((id) => ids.indexOf(id));
  const realisations = options.small ? REALISATIONS / 10 : REALISATIONS;
  rows.push(
    pairedRow({
      name: `spatial: ${realisations.toLocaleString('en-US')} SI outbreaks + detection of 20 ropes, 2 x 40 barn`,
      unit: 'CPU ms per barn-round',
      scale: perBarnRound(1),
      pairs: options.small ? 3 : 5,
      note: 'bitsets + sparse escape products vs dense neighbour scan and array copies',
      ours: () => {
        const o = simulateOutbreaks(w, {
          infected: 8,
          beta: 0.3,
          background: 0.01,
          realisations,
          rng: seededRng(SEED),
        });
        return detectionProbability(o, ropes, 0.9).p;
      },
      baseline: () => naiveSpreadDetection(W, 8, 0.3, 0.01, ropeIndex, 0.9, realisations, seededRng(SEED)),
    }),
  );
  return rows;
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const rows = await benchSpatial({ small: process.argv.includes('--small') });
  for (const r of rows)
    console.log(
      `${r.name}: ${r.value.toFixed(1)} ${r.unit} (baseline ${r.baseline?.toFixed(1)}, ratio ${r.ratio?.toFixed(3)}) ${r.note ?? ''}`,
    );
}
