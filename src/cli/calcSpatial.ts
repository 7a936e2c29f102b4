import { readFileSync } from 'node:fs';
import { resolve } from 'node:path';
import { z } from 'zod';
import { UsageError, printJson, type CliIo } from './io.js';
import { seededRng, deriveSeed } from '../util/random.js';
import {
  bernoulliScan,
  defaultWeights,
  distanceBandWeights,
  joinCountTest,
  knnWeights,
  listWeights,
  localGiStar,
  localJoinCounts,
  moranTest,
  type SpatialWeights,
} from '../spatial/index.js';

const caseSchema = z
  .object({
    pens: z.array(
      z.object({
        id: z.string().min(1),
        x: z.number().finite(),
        y: z.number().finite(),
        positive: z.boolean(),
        load: z.number().finite().min(0),
      }),
    ),
    neighbours: z.record(z.string(), z.array(z.string())).optional(),
    k: z.number().int().min(1).optional(),
    band: z.number().finite().positive().optional(),
    style: z.enum(['binary', 'row']).default('binary'),
    permutations: z.number().int().min(1).max(1_000_000).default(999),
    seed: z.number().int().default(1),
  })
  .strict();

export type SpatialCase = z.infer<typeof caseSchema>;

function readCase(io: CliIo, path: string): SpatialCase {
  const file = resolve(io.cwd, path);
  let text: string;
  try {
    text = readFileSync(file, 'utf8');
  } catch (error) {
    throw new UsageError(`--input: cannot read ${file}: ${(error as Error).message}`);
  }
  let raw: unknown;
  try {
    raw = JSON.parse(text.replace(/^\uFEFF/, ''));
  } catch (error) {
    throw new UsageError(`--input: ${file} is not valid JSON: ${(error as Error).message}`);
  }
  const parsed = caseSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = parsed.error.issues[0]!;
    throw new UsageError(`--input: ${issue.path.join('.') || '(top level)'}: ${issue.message}`);
  }
  const c = parsed.data;
  if (c.pens.length === 0) throw new UsageError('--input: pens must list at least 2 pens, got none');
  if (c.pens.length === 1) throw new UsageError('--input: pens must list at least 2 pens, got 1');
  const ids = new Set<string>();
  for (const p of c.pens) {
    if (ids.has(p.id)) throw new UsageError(`--input: pen id ${p.id} occurs twice`);
    ids.add(p.id);
  }
  const given = [c.neighbours !== undefined, c.k !== undefined, c.band !== undefined].filter(Boolean).length;
  if (given > 1) throw new UsageError('--input: give only one of neighbours, k or band');
  if (c.neighbours) {
    for (const [from, tos] of Object.entries(c.neighbours)) {
      if (!ids.has(from)) throw new UsageError(`--input: neighbours names unknown pen ${from}`);
      for (const to of tos)
        if (!ids.has(to)) throw new UsageError(`--input: neighbours of ${from} names unknown pen ${to}`);
    }
  }
  if (c.k !== undefined && c.k > c.pens.length - 1)
    throw new UsageError(`--input: k must be at most ${c.pens.length - 1} (pens - 1), got ${c.k}`);
  return c;
}

function weightsFor(c: SpatialCase): SpatialWeights {
  const points = c.pens.map((p) => ({ id: p.id, x: p.x, y: p.y }));
  if (c.neighbours)
    return listWeights(
      points.map((p) => p.id),
      c.neighbours,
      c.style,
    );
  if (c.k !== undefined) return knnWeights(points, c.k, c.style);
  if (c.band !== undefined) return distanceBandWeights(points, c.band, c.style);
  // No weights given: the pipeline default, 2 nearest pens symmetrised (see defaultWeights).
  return defaultWeights(points, c.style);
}

/** Runs every spatial statistic of the calculator on one case; exported for tests and scripts. */
export function computeSpatialCase(c: SpatialCase) {
  const w = weightsFor(c);
  const positive = c.pens.map((p) => p.positive);
  const loads = c.pens.map((p) => p.load);
  const jc = joinCountTest(w, positive, {
    rng: seededRng(deriveSeed(c.seed, 'join-count')),
    permutations: c.permutations,
  });
  const moran = moranTest(w, loads, { rng: seededRng(deriveSeed(c.seed, 'moran')), permutations: c.permutations });
  const scan = bernoulliScan(c.pens, positive, {
    rng: seededRng(deriveSeed(c.seed, 'scan')),
    permutations: c.permutations,
  });
  const ml = scan.mostLikely;
  return {
    seed: c.seed,
    permutations: c.permutations,
    weights: { description: w.description, style: w.style, isolates: w.isolates },
    joinCount: {
      bb: jc.bb,
      bw: jc.bw,
      ww: jc.ww,
      joins: jc.joins,
      positives: jc.positives,
      expectedBB: jc.expectedBB,
      varianceBB: jc.varianceBB,
      zBB: jc.zBB,
      pPermutation: jc.pPermutation,
      pMethod: jc.inference.method,
      placements: jc.inference.placements,
    },
    moran: {
      I: moran.I,
      expected: moran.expected,
      varianceNormality: moran.varianceNormality,
      varianceRandomisation: moran.varianceRandomisation,
      zNormality: moran.zNormality,
      zRandomisation: moran.zRandomisation,
      pPermutation: moran.pPermutation,
      ...(moran.reason ? { reason: moran.reason } : {}),
    },
    localGiStar: localGiStar(w, loads).map((g) => ({ id: g.id, z: g.z })),
    localJoinCount: localJoinCounts(w, positive),
    scan: {
      pens: ml ? ml.pens : [],
      llr: ml ? ml.llr : 0,
      p: ml ? ml.p : 1,
      positives: ml ? ml.positives : 0,
      expected: ml ? ml.expected : 0,
      secondary: scan.secondary.map((s) => ({ pens: s.pens, llr: s.llr, p: s.p })),
    },
  };
}

const fmt = (v: number | null, digits = 4) => (v === null ? 'n/a' : Number(v.toFixed(digits)).toString());

/**
 * `ropewatch calc spatial --input CASE.json [--json]` (declared in calc.ts): join counts
 * (non-free moments, exact or Monte Carlo permutation p), Moran's I (Cliff & Ord moments), Gi*
 * (self included) and the Bernoulli scan for one set of pens. Bad input is a UsageError (exit 2).
 */
export function runSpatialCalc(io: CliIo, opts: { input: string; json?: boolean }): void {
  const c = readCase(io, opts.input);
  let result: ReturnType<typeof computeSpatialCase>;
  try {
    result = computeSpatialCase(c);
  } catch (error) {
    if (error instanceof RangeError) throw new UsageError(`--input: ${error.message}`);
    throw error;
  }
  if (opts.json) {
    printJson(io, result);
    return;
  }
  const jc = result.joinCount;
  const m = result.moran;
  const lines = [
    `weights: ${result.weights.description}${result.weights.isolates.length ? `; isolates: ${result.weights.isolates.join(', ')}` : ''}`,
    `join count: BB=${fmt(jc.bb)} (expected ${fmt(jc.expectedBB)}, z ${fmt(jc.zBB, 2)}), p=${fmt(jc.pPermutation)} (${jc.pMethod})`,
    `Moran's I: ${fmt(m.I)} (expected ${fmt(m.expected)}, z ${fmt(m.zRandomisation, 2)}), p=${fmt(m.pPermutation)}${m.reason ? ` (${m.reason})` : ''}`,
    `scan: ${result.scan.pens.length ? `${result.scan.pens.join(', ')} LLR=${fmt(result.scan.llr)} p=${fmt(result.scan.p)}` : 'no window with excess positives'}`,
    `seed ${result.seed}, ${result.permutations} permutations`,
  ];
  io.stdout(lines.join('\n') + '\n');
}
