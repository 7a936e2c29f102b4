/** outbox/<site>/<round>/clusters.json: a round's spatial review (src/analysis/spatialRound.ts, src/spatial). */
import { z } from 'zod';
import { CLUSTERS_SCHEMA, type RoundSpatial } from '../../analysis/spatialRound.js';
import { count, fits, isoDate, measure, probability } from './common.js';

const nullableNumber = z.number().nullable();

const joinCount = z.object({
  n: count,
  positives: count,
  bb: count,
  bw: count,
  ww: count,
  joins: count,
  expectedBB: z.number(),
  varianceBB: z.number(),
  expectedBW: z.number(),
  expectedWW: z.number(),
  zBB: nullableNumber,
  pPermutation: probability,
  inference: z.object({
    method: z.enum(['exact', 'monte-carlo']),
    placements: count,
    permutations: count,
    stratified: z.boolean(),
  }),
});

const moran = z.object({
  n: count,
  I: nullableNumber,
  expected: z.number(),
  varianceNormality: nullableNumber,
  varianceRandomisation: nullableNumber,
  zNormality: nullableNumber,
  zRandomisation: nullableNumber,
  pPermutation: probability.nullable(),
  permutations: count,
  kurtosis: nullableNumber,
  reason: z.string().optional(),
});

const scanWindow = z.object({
  pens: z.array(z.string()),
  centre: z.string(),
  radius: z.number(),
  positives: count,
  expected: z.number(),
  llr: z.number(),
  p: probability,
});

const newPositive = z.object({
  id: z.string(),
  barn: z.string(),
  nearestEarlierDistance: nullableNumber,
  nearestEarlierPen: z.string().nullable(),
  sameBarn: z.boolean().nullable(),
  kind: z.string().nullable(),
});

const spread = z.object({
  pattern: z.string(),
  newPositives: z.array(newPositive),
  adjacent: count,
  distant: count,
  thresholds: z.object({ adjacentDistance: z.number() }),
  explanation: z.string(),
});

const estimate = z.object({ p: probability, standardError: z.number(), realisations: count });

const barnReport = z.object({
  barn: z.string(),
  seed: count,
  n: count,
  positives: count,
  weights: z.object({
    description: z.string(),
    style: z.string(),
    isolates: z.array(z.string()),
    band: nullableNumber,
  }),
  excluded: z.array(z.object({ id: z.string(), reason: z.string() })),
  joinCount: joinCount.nullable(),
  moran: moran.nullable(),
  pens: z.array(
    z.object({
      id: z.string(),
      x: z.number(),
      y: z.number(),
      positive: z.boolean(),
      resultClass: z.string().nullable(),
      ct: nullableNumber,
      load: z.number(),
      neighbours: count,
      giStar: nullableNumber,
      localBB: count.nullable(),
      localP: probability.nullable(),
      newPositive: z.boolean(),
    }),
  ),
  scan: z
    .object({
      n: count,
      positives: count,
      windows: count,
      maxWindowPens: count,
      permutations: count,
      mostLikely: scanWindow.nullable(),
      secondary: z.array(scanWindow),
    })
    .nullable(),
  clusters: z.array(
    z.object({
      index: count,
      pens: z.array(z.string()),
      size: count,
      extent: z.object({ minX: z.number(), maxX: z.number(), minY: z.number(), maxY: z.number() }),
      alleyLength: z.number(),
      meanCt: nullableNumber,
      minCt: nullableNumber,
      newPens: z.array(z.string()),
      earlierPositivePens: z.array(z.string()),
    }),
  ),
  clusterLinkDistance: z.number(),
  spread,
  detection: z
    .object({
      actual: estimate,
      random: estimate,
      difference: z.object({ value: z.number(), standardError: z.number() }),
      ropes: count,
      se: probability,
      infected: count,
      beta: z.number(),
      background: z.number(),
      inUsePens: count,
      reseeded: count,
      seed: count,
    })
    .nullable(),
  notes: z.array(z.string()),
});

export const clusters = z.object({
  schema: z.literal(CLUSTERS_SCHEMA),
  site: z.string(),
  round: z.object({ number: count, id: z.string(), startOn: isoDate }),
  seed: count,
  assays: z.array(
    z.object({
      assayId: z.string(),
      measure,
      spByPen: z.record(z.string(), nullableNumber),
      clusterSp: z.array(
        z.object({ barnId: z.string(), cluster: count, meanSp: nullableNumber, maxSp: nullableNumber }),
      ),
      report: z.object({
        site: z.string(),
        seed: count,
        barns: z.array(barnReport),
        joinCount: joinCount.nullable(),
        spread,
        notes: z.array(z.string()),
      }),
      alerts: z.array(
        z.object({
          kind: z.enum(['significant-cluster', 'spread', 'new-focus', 'scattered-positives']),
          barnId: z.string().nullable(),
          assayId: z.string(),
          message: z.string(),
        }),
      ),
      detection: z.array(
        z.object({
          barnId: z.string(),
          hypergeometric: probability,
          spreadModel: probability.nullable(),
          spreadModelSE: nullableNumber,
          randomRopes: probability.nullable(),
        }),
      ),
    }),
  ),
  model: z.object({
    transmission: z.number(),
    background: z.number(),
    realisations: count,
    contacts: z.literal('queen'),
  }),
});

fits<RoundSpatial, z.input<typeof clusters>>(true);
