/**
 * The next round's plan for a site: how many routine ropes each barn needs (or the site's budget
 * allows), where they go (fixed spatial sampling on the real layout, rotating each round), the
 * follow-up and retest ropes after the last round, the due date, what the round will prove if
 * it comes back negative on time, and how other schedules with the same ropes per month compare.
 * Pure: the round model, its confidence and spatial analysis, the clock value and the earlier
 * plan (for stable sample IDs) come in; a plain value goes out, its notes as coded facts.
 */
import { buildRoundPlan } from '../plan/index.js';
import { twoStageSiteDetection } from '../stats/index.js';
import { deriveSeed } from '../util/random.js';
import { withMonitoring } from './monitoredPlan.js';
import { PLAN_SCHEMA, type PlannedRound } from './planTypes.js';
import { assignPools, keepEarlierIds } from './planIds.js';

export {
  PLAN_SCHEMA,
  type BarnSizingReport,
  type NextRoundPlan,
  type PlannedRound,
  type PooledPlanRow,
} from './planTypes.js';

import { planContext, type PlanInput } from './planContext.js';
import { barnSizing, ifNegative, routineRopes, sizeEachBarn } from './planSizing.js';
import { barnPlanInputs, findings, followUpNotes, poolingNotes } from './planFindings.js';
import { freedomForecast, scheduleComparisons } from './planForecast.js';

export type { PlanInput } from './planContext.js';
export { GROWTH_DOUBLING_DAYS } from './planForecast.js';

/**
 * Plans the next round of a site: sizes each barn, shares a budget, places routine, follow-up
 * and retest ropes, keeps earlier sample IDs, pools, and forecasts what the round proves. Its
 * notes and readings are coded facts; src/report/planWording.ts words them.
 */
export function planNextRound(input: PlanInput): PlannedRound {
  const { site, settings } = input;
  const program = site.program;
  const ctx = planContext(input);
  const perBarn = sizeEachBarn(ctx);
  const routine = routineRopes(ctx, perBarn);
  const found = findings(ctx);
  const notes = followUpNotes(ctx, found, routine);
  const plan = buildRoundPlan({
    siteCode: site.code,
    round: ctx.roundNumber,
    dueDate: ctx.due.dueDate,
    barns: barnPlanInputs(ctx, found, routine),
  });
  const rows = assignPools(
    keepEarlierIds(
      plan.rows.map((row) => ({ ...row, siteId: site.id })),
      site,
      ctx.roundNumber,
      input.existingIds,
    ),
    site,
    ctx.roundNumber,
    program.pooling?.poolSize ?? 1,
    input.existingIds,
  );
  notes.push(...poolingNotes(ctx, routine));
  const barns = plan.barns.map((summary, index) => ({
    ...summary,
    sizing: barnSizing(ctx, perBarn[index]!, routine.ropes[index]!),
  }));
  const siteDetectionIfNegative = twoStageSiteDetection(
    barns.map((barn) => barn.sizing.plannedDetection),
    ctx.infectedBarns,
  );
  const forecast = freedomForecast(ctx, siteDetectionIfNegative);
  notes.push(...forecast.notes);
  const seed = deriveSeed(settings.seed, site.id, 'plan', ctx.roundNumber);
  const last = ctx.last;
  return withMonitoring(
    {
      schema: PLAN_SCHEMA,
      site: { id: site.id, name: site.name, code: site.code },
      basedOn: last ? { round: last.number, id: last.id, startOn: last.startOn } : null,
      round: ctx.roundNumber,
      dueDate: ctx.due.dueDate,
      overdue: ctx.due.overdue,
      daysOverdue: ctx.due.daysOverdue,
      daysUntilDue: ctx.due.daysUntilDue,
      ropes: rows,
      barns,
      sizing: {
        sizingModel: settings.sizingModel,
        sizeFor: program.sizeFor,
        infectedBarns: ctx.infectedBarns,
        ifNegative: ifNegative(ctx, routine, barns, siteDetectionIfNegative),
        target: program.targetConfidence,
        budget: input.budget ?? program.ropeBudget ?? null,
        allocation: routine.allocation,
        notes: routine.notes,
      },
      siteDetectionIfNegative,
      freedom: forecast.freedom,
      schedules: scheduleComparisons(ctx, routine, seed),
      seed,
      notes,
    },
    ctx.monitored,
    program.clearAfterNegativeRounds,
  );
}
