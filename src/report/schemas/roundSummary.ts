/** outbox/<site>/<round>/summary.json: a round's summary (src/analysis/roundSummary.ts). */
import { z } from 'zod';
import { type RoundSummary, SUMMARY_SCHEMA } from '../../analysis/roundSummary.js';
import {
  count,
  fits,
  groupRef,
  isoDate,
  measure,
  positiveState,
  probability,
  resultClass,
  roundState,
  siteRef,
} from './common.js';

const nullableNumber = z.number().nullable();

const siteConfidence = z.object({
  assayId: z.string(),
  measure,
  roundNumber: count,
  detectionConfidence: probability,
  barns: count,
  infectedBarns: count,
  detectionIfEveryBarn: probability,
  fewInfectedBarns: count,
  detectionIfFewBarns: probability,
  unpooledDetectionConfidence: probability.optional(),
  positive: z.boolean(),
  positiveBarns: z.array(z.string()),
  daysSincePrevious: count.nullable(),
  introductionApplied: probability,
  priorFreedom: probability,
  freedom: probability.nullable(),
  status: positiveState.nullable(),
  nextPrior: probability,
  levelsOffAt: probability,
  freedomReset: z.boolean(),
});

const prevalence = z.object({
  apparent: probability,
  lower95: probability,
  upper95: probability,
  trueEstimate: probability,
  clipped: z.boolean(),
  note: z.string().nullable(),
});

const barnConfidence = z.object({
  barnId: z.string(),
  assayId: z.string(),
  measure,
  pens: count,
  tested: count,
  designInfected: count,
  sensitivity: probability,
  specificity: probability,
  detectionConfidence: probability,
  falseAlarm: probability,
  ropesNeeded: count.nullable(),
  ropesNeededModel: z.enum(['hypergeometric', 'spatial']),
  targetReachable: z.boolean(),
  censusConfidence: probability.nullable(),
  roundsNeededIfUnreachable: count.nullable(),
  positives: count,
  prevalence: prevalence.nullable(),
  status: positiveState.nullable(),
  group: groupRef.nullable(),
  empty: z.boolean(),
  freedom: probability.nullable(),
  priorFreedom: probability.nullable(),
  freedomRestart: z.boolean(),
  pooled: z
    .object({
      pools: count,
      pooledPens: count,
      positivePools: count,
      poolSensitivity: probability,
      poolSpecificity: probability,
      unpooledDetectionConfidence: probability,
    })
    .optional(),
});

const source = {
  labId: z.string(),
  reportedOn: isoDate.nullable(),
  accessions: z.array(z.string()),
  assays: z.array(z.string()),
  results: count,
  collectedFrom: isoDate.nullable(),
  collectedTo: isoDate.nullable(),
  labName: z.string(),
};

const cutoffs = {
  positiveBelow: nullableNumber,
  suspectBelow: nullableNumber,
  cycleLimit: nullableNumber,
  positiveAtOrAbove: nullableNumber,
  suspectAtOrAbove: nullableNumber,
};

const barn = z.object({
  barnId: z.string(),
  name: z.string(),
  group: groupRef.nullable(),
  empty: z.boolean(),
  pensInUse: count,
  ropesHung: count,
  ropesReturned: count,
  missingSampleIds: z.array(z.string()),
  awaitingSampleIds: z.array(z.string()),
  missingPens: z.record(z.string(), z.string()),
  mistyped: z.array(
    z.object({
      sampleId: z.string(),
      penId: z.string(),
      side: z.string(),
      refusals: z.array(z.object({ written: z.string(), fileName: z.string(), line: count })),
    }),
  ),
  sampledPens: z.array(z.string()),
  assays: z.array(
    z.object({
      assayId: z.string(),
      tested: count,
      positive: count,
      suspect: count,
      negative: count,
      invalid: count,
      positivePens: z.array(z.string()),
      suspectPens: z.array(z.string()),
      invalidPens: z.array(z.string()),
      pools: z.array(z.object({ poolId: z.string(), poolClass: resultClass, pens: z.array(z.string()) })).optional(),
      positivePoolPens: z.array(z.string()).optional(),
      confidence: barnConfidence,
    }),
  ),
  sources: z.array(z.object(source)),
});

const penResult = z.object({
  measure,
  resultClass,
  ct: nullableNumber,
  sp: nullableNumber,
  loadBand: z.string().nullable(),
  load: z.number().min(0),
  reason: z.string(),
  sampleId: z.string(),
  labId: z.string(),
  labCall: z.string().nullable(),
  callDiffers: z.boolean(),
  ctRaw: z.string().nullable(),
  ...cutoffs,
  accession: z.string().nullable(),
  collectedOn: isoDate.nullable(),
  reportedOn: isoDate.nullable(),
  pool: z.object({ poolId: z.string(), poolClass: resultClass, pens: z.array(z.string()) }).optional(),
  labName: z.string(),
  sequencingCandidate: z.boolean(),
  history: z.array(
    z.object({
      round: count,
      roundId: z.string(),
      startOn: isoDate,
      resultClass,
      measure,
      ct: nullableNumber,
      sp: nullableNumber,
      labId: z.string(),
      positiveBelow: nullableNumber,
      cycleLimit: nullableNumber,
      positiveAtOrAbove: nullableNumber,
      labName: z.string(),
    }),
  ),
});

const reading = z.object({
  resultClass,
  ct: nullableNumber,
  ctRaw: z.string(),
  labCall: z.string().nullable(),
  reportedOn: isoDate.nullable(),
  status: z.string().nullable(),
  statusWord: z.string().nullable(),
});

export const roundSummary = z.object({
  schema: z.literal(SUMMARY_SCHEMA),
  site: siteRef,
  round: z.object({
    number: count,
    id: z.string(),
    startOn: isoDate,
    endOn: isoDate,
    state: roundState,
    resultsDueOn: isoDate,
  }),
  program: z.object({
    designPrevalence: z.string(),
    barnDesignPrevalence: z.string(),
    targetConfidence: probability,
    roundWindowDays: count,
    intervalDays: count,
    priorFreedom: probability,
    introductionPerInterval: probability,
    clearAfterNegativeRounds: count,
  }),
  assays: z.array(
    z.object({
      id: z.string(),
      name: z.string(),
      notifiable: z.boolean(),
      measure,
      pairedWith: z.string().nullable(),
      site: siteConfidence,
      siteFigures: z.array(
        z.object({ label: z.string(), detection: probability, infectedBarns: count, freedom: z.boolean() }),
      ),
    }),
  ),
  pairs: z.array(z.object({ antibody: z.string(), pcr: z.string() })),
  barns: z.array(barn),
  pens: z.array(
    z.object({
      barnId: z.string(),
      penId: z.string(),
      side: z.string(),
      sampleIds: z.array(z.string()),
      returned: z.boolean(),
      results: z.record(z.string(), penResult),
    }),
  ),
  sources: z.array(z.object({ ...source, barnIds: z.array(z.string()) })),
  cutoffs: z.array(
    z.object({
      labId: z.string(),
      assayId: z.string(),
      measure,
      ...cutoffs,
      results: count,
      labName: z.string(),
      defaults: z.object(cutoffs).nullable(),
    }),
  ),
  disagreements: z.array(
    z.object({
      barnId: z.string(),
      penId: z.string(),
      sampleId: z.string(),
      assayId: z.string(),
      labId: z.string(),
      accession: z.string().nullable(),
      labCall: z.string(),
      measure,
      ct: nullableNumber,
      sp: nullableNumber,
      ctRaw: z.string().nullable(),
      resultClass,
      reason: z.string(),
      standsForPen: z.boolean(),
      labName: z.string(),
    }),
  ),
  replaced: z.array(
    z.object({
      sampleId: z.string(),
      assayId: z.string(),
      labId: z.string(),
      kind: z.string().nullable(),
      reason: z.string(),
      replaced: reading,
      inPlace: reading,
      barnId: z.string(),
      penId: z.string(),
      labName: z.string(),
    }),
  ),
  sequencing: z.array(
    z.object({
      assayId: z.string(),
      sequencingBelow: z.number(),
      reading: z.string(),
      pens: z.array(
        z.object({
          barnId: z.string(),
          penId: z.string(),
          sampleId: z.string(),
          ct: z.number(),
          labId: z.string(),
          labName: z.string(),
        }),
      ),
    }),
  ),
  notices: z.array(z.string()),
  cautions: z.array(z.string()).readonly(),
});

fits<RoundSummary, z.input<typeof roundSummary>>(true);
