/**
 * What the next round buys over time: the freedom forecast on time against missed, and each
 * barn's comparison of other schedules with the same ropes per month. Pure.
 */
import { compareSchedules, compareSchedulesGrowing, onTimeVersusMissed } from '../plan/index.js';
import { detectionFor } from '../stats/index.js';
import { deriveSeed, seededRng } from '../util/random.js';
import type { PlannedRound, PlanNote } from './planTypes.js';
import type { PlanContext } from './planContext.js';
import type { Routine } from './planSizing.js';

/** Doubling time of infected pens in the growing-infection comparison: a modelling assumption. */
export const GROWTH_DOUBLING_DAYS = 7;

/** The freedom forecast (on time against missed), or the note why there is none; and the overdue note. */
export function freedomForecast(
  ctx: PlanContext,
  siteDetection: number,
): { freedom: PlannedRound['freedom']; notes: PlanNote[] } {
  const program = ctx.input.site.program;
  const notes: PlanNote[] = [];
  let freedom: PlannedRound['freedom'] = null;
  const lastConfidence = ctx.freedomIndex < 0 ? undefined : ctx.input.confidence[ctx.freedomIndex];
  const assayId = ctx.models[0]?.assayId;
  const lastSite = lastConfidence?.sites.find((entry) => entry.assayId === assayId);
  if (lastSite && assayId && lastSite.status?.state === 'positive') {
    notes.push({
      kind: 'site-positive',
      assayId,
      sinceRound: lastSite.status.sinceRound,
      clearAfter: program.clearAfterNegativeRounds,
      priorFreedom: program.priorFreedom,
    });
  } else if (lastSite && assayId && (lastSite.freedomReset || lastSite.freedom === null)) {
    notes.push({ kind: 'last-round-positive', assayId, priorFreedom: program.priorFreedom });
  } else if (lastSite && assayId && lastSite.freedom !== null) {
    const currentFreedom = lastSite.freedom;
    freedom = {
      assayId,
      currentFreedom,
      ...onTimeVersusMissed({
        currentFreedom,
        roundSensitivity: siteDetection,
        introductionPerInterval: program.introductionPerInterval,
        intervalDays: program.intervalDays,
      }),
    };
  }
  if (ctx.due.overdue) notes.push({ kind: 'overdue', dueDate: ctx.due.dueDate, daysOverdue: ctx.due.daysOverdue });
  return { freedom, notes };
}

/** Each barn's comparison of other schedules with the same ropes per month, static and with growing infection. */
export function scheduleComparisons(ctx: PlanContext, routine: Routine, seed: number): PlannedRound['schedules'] {
  const program = ctx.input.site.program;
  return ctx.models.map((model, index) => {
    const ropes = Math.max(1, routine.ropes[index]!);
    const statics = compareSchedules({
      ropes,
      intervalDays: program.intervalDays,
      maxRopes: model.pensInUse,
      detect: model.hyper,
    });
    const growing = compareSchedulesGrowing(
      { ropes, intervalDays: program.intervalDays, maxRopes: model.pensInUse },
      {
        initialInfected: 1,
        doublingDays: GROWTH_DOUBLING_DAYS,
        maxInfected: model.pensInUse,
        detectAt: (n, infected) =>
          detectionFor({
            pens: model.pensInUse,
            infected: Math.min(infected, model.pensInUse),
            sensitivity: model.sensitivity,
          })(Math.min(n, model.pensInUse)),
      },
      { replicates: 2000, rng: seededRng(deriveSeed(seed, model.barn.id, 'schedules')) },
    );
    return {
      barnId: model.barn.id,
      static: statics.options,
      growing: growing.options,
      notes: [...statics.notes, ...growing.notes, { kind: 'growth-doubling', days: GROWTH_DOUBLING_DAYS }],
    };
  });
}
