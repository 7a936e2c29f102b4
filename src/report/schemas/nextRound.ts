/** outbox/<site>/next-round.json: the next round's plan (src/analysis/planTypes.ts) with the cautions. */
import { z } from 'zod';
import { PLAN_SCHEMA } from '../../analysis/planTypes.js';
import type { PlanReason } from '../../plan/monitoring.js';
import type { ScheduleLabel } from '../../plan/schedule.js';
import type { nextRoundJson } from '../nextRoundFiles.js';
import { count, fits, isoDate, probability, sameType } from './common.js';

const nullableNumber = z.number().nullable();

export const planReason = z.enum(['routine', 'follow-up', 'retest', 're-rope', 'tracking']);
sameType<z.infer<typeof planReason>, PlanReason>(true);
const scheduleLabel = z.enum(['current', 'half the ropes, twice as often', 'twice the ropes, half as often']);
sameType<z.infer<typeof scheduleLabel>, ScheduleLabel>(true);

const scheduleOption = {
  label: scheduleLabel,
  ropes: count,
  intervalDays: z.number(),
  ropesPer30Days: z.number(),
  perRoundDetection: probability,
  expectedDelayDays: nullableNumber,
};

const sizingReport = z.object({
  barnId: z.string(),
  assayId: z.string(),
  pensInUse: count,
  designInfected: count,
  sensitivity: probability,
  model: z.enum(['spread model (fixed spatial sampling under contagious spread)', 'hypergeometric (random placement)']),
  routineRopes: count,
  hypergeometricRopes: count.nullable(),
  spreadModelRopes: count.nullable(),
  reachable: z.boolean(),
  ceiling: probability.nullable(),
  roundsNeeded: count.nullable(),
  statement: z.string(),
  plannedDetection: probability,
  plannedHypergeometric: probability,
  plannedSpreadModel: probability.nullable(),
  spreadModel: z
    .object({
      standardError: z.number(),
      realisations: count,
      seed: count,
      transmission: z.number(),
      background: z.number(),
    })
    .nullable(),
});

export const nextRound = z.object({
  schema: z.literal(PLAN_SCHEMA),
  site: z.object({ id: z.string(), name: z.string(), code: z.string() }),
  basedOn: z.object({ round: count, id: z.string(), startOn: isoDate }).nullable(),
  round: count,
  dueDate: isoDate,
  overdue: z.boolean(),
  daysOverdue: count,
  daysUntilDue: z.number().int(),
  ropes: z.array(
    z.object({
      sampleId: z.string(),
      siteId: z.string(),
      barnId: z.string(),
      penId: z.string(),
      side: z.string(),
      reason: planReason,
      dueDate: isoDate,
      poolId: z.string().optional(),
    }),
  ),
  barns: z.array(
    z.object({
      barnId: z.string(),
      ropes: count,
      routine: count,
      followUp: count,
      retest: count,
      reRope: count,
      tracking: count,
      coveringRadius: nullableNumber,
      meanDistance: nullableNumber,
      routineCoveringRadius: nullableNumber,
      coverageRounds: count.nullable(),
      cycleLength: count,
      notes: z.array(z.string()),
      sizing: sizingReport,
      monitoring: z
        .object({
          barnId: z.string(),
          assays: z.array(z.string()),
          sinceRound: count,
          negativeRoundsInARow: count,
          reRope: z.array(z.string()),
          baseRopes: count,
        })
        .optional(),
    }),
  ),
  sizing: z.object({
    sizingModel: z.enum(['hypergeometric', 'spatial']),
    sizeFor: z.enum(['barn', 'site']),
    infectedBarns: count,
    ifNegative: z.string(),
    target: probability,
    budget: count.nullable(),
    allocation: z
      .object({
        ropes: z.array(z.object({ barnId: z.string(), ropes: count, detection: probability })),
        total: count,
        siteDetection: probability,
        method: z.enum(['greedy', 'dynamic-programming', 'balanced']),
        unused: count,
      })
      .nullable(),
    notes: z.array(z.string()),
  }),
  siteDetectionIfNegative: probability,
  freedom: z
    .object({
      onTime: probability,
      withoutRound: probability,
      missed: probability,
      cost: z.number(),
      sentence: z.string(),
      assayId: z.string(),
      currentFreedom: probability,
    })
    .nullable(),
  schedules: z.array(
    z.object({
      barnId: z.string(),
      static: z.array(z.object(scheduleOption)),
      growing: z.array(
        z.object({
          ...scheduleOption,
          simulated: z.object({
            replicates: count,
            meanDays: nullableNumber,
            standardError: nullableNumber,
            censored: count,
          }),
        }),
      ),
      notes: z.array(z.string()),
    }),
  ),
  seed: count,
  notes: z.array(z.string()),
  cautions: z.array(z.string()).readonly(),
});

fits<ReturnType<typeof nextRoundJson>, z.input<typeof nextRound>>(true);
