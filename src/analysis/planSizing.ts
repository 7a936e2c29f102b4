/**
 * How many routine ropes each barn of the next round gets: the smallest count reaching the barn
 * target by the model that sizes, the budget shared out when the counts exceed it, what each
 * barn's ropes then give, and what the round proves if it comes back negative. Pure; the
 * readings and notes are coded facts (src/report/planWording.ts words them).
 */
import {
  allocateRopesBalanced,
  smallestRopes,
  smallestRopesConservative,
  type Allocation,
  type Reached,
  type Unreachable,
} from '../plan/index.js';
import { budgetForSurveyed } from './monitoredPlan.js';
import type { BarnReading, IfNegativeReading, PlannedRound, SizingNote } from './planTypes.js';

import { barnStatusOn } from '../rounds/pigGroups.js';
import type { BarnModel, PlanContext } from './planContext.js';

export interface BarnReach {
  model: BarnModel;
  reach: Reached | Unreachable;
  hyperRopes: number | null;
  spreadRopes: number | null;
  ropes: number;
  reachable: boolean;
}

/** Each barn's ropes for the barn target, by the model that sizes. */
export function sizeEachBarn(ctx: PlanContext): BarnReach[] {
  return ctx.models.map((model) => {
    const reach = smallestRopes(model.hyper, ctx.barnTarget, model.pensInUse);
    const hyperRopes = reach.reachable ? reach.ropes : null;
    // The spread model sizes only when chosen, and then by its estimate less two Monte Carlo
    // standard errors, so that another seed does not move the count.
    const spreadReach =
      ctx.spatialSizing && model.spread
        ? smallestRopesConservative(model.spread, ctx.barnTarget, model.pensInUse)
        : null;
    return spreadReach
      ? {
          model,
          reach,
          hyperRopes,
          spreadRopes: spreadReach.ropes,
          ropes: spreadReach.ropes ?? model.pensInUse,
          reachable: spreadReach.ropes !== null,
        }
      : {
          model,
          reach,
          hyperRopes,
          spreadRopes: null,
          ropes: hyperRopes ?? model.pensInUse,
          reachable: reach.reachable,
        };
  });
}

export interface Routine {
  /** Routine ropes per barn, in the site's barn order. */
  ropes: number[];
  allocation: Allocation | null;
  emptyOnDue: Set<string>;
  isSurveyed: (barnId: string) => boolean;
  notes: SizingNote[];
}

/** The routine ropes of the surveyed barns, shared out when they exceed the rope budget, and the sizing notes. */
export function routineRopes(ctx: PlanContext, perBarn: readonly BarnReach[]): Routine {
  const { input, models, monitored } = ctx;
  const program = input.site.program;
  const target = program.targetConfidence;
  const budget = input.budget ?? program.ropeBudget ?? null;
  // A barn run all-in/all-out that will stand empty on the due date (closed out, next group not
  // yet placed) gets no rope, and no share of a budget: there are no pigs to find.
  const emptyOnDue = new Set(
    models
      .filter((model) => barnStatusOn(model.barn.groups, ctx.due.dueDate).kind === 'empty')
      .map((model) => model.barn.id),
  );
  const isSurveyed = (barnId: string) => !monitored.has(barnId) && !emptyOnDue.has(barnId);
  let allocation: Allocation | null = null;
  let ropes = perBarn.map((entry) => (isSurveyed(entry.model.barn.id) ? entry.ropes : 0));
  const total = ropes.reduce((sum, n) => sum + n, 0);
  const notes: SizingNote[] = [
    program.sizeFor === 'site'
      ? {
          kind: 'site-target',
          target,
          infectedBarns: ctx.infectedBarns,
          barns: models.length,
          barnTarget: ctx.barnTarget,
          routineRopes: total,
        }
      : { kind: 'barn-target', target, routineRopes: total },
  ];
  const surveyBudget = budgetForSurveyed(budget, monitored);
  if (surveyBudget !== null && total > surveyBudget) {
    const chosenDetect = (model: BarnModel) =>
      ctx.spatialSizing && model.spread ? (n: number) => model.spread!(n).p : model.hyper;
    const barnSizing = models
      .filter((model) => isSurveyed(model.barn.id))
      .map((model) => ({ barnId: model.barn.id, maxRopes: model.pensInUse, detect: chosenDetect(model) }));
    const shared = allocateRopesBalanced(barnSizing, surveyBudget);
    allocation = shared;
    ropes = models.map((model) => shared.ropes.find((entry) => entry.barnId === model.barn.id)?.ropes ?? 0);
    const weakestBarn = Math.min(...shared.ropes.map((entry) => entry.detection));
    notes.push({ kind: 'budget-shared', budget: surveyBudget, weakestBarn, siteDetection: shared.siteDetection });
  }
  const { settings } = input;
  notes.push({
    kind: 'sizing-model',
    model: ctx.spatialSizing ? 'spatial' : 'hypergeometric',
    transmission: settings.spreadTransmission,
    background: settings.spreadBackground,
    realisations: settings.spreadRealisations,
    seed: settings.seed,
  });
  return { ropes, allocation, emptyOnDue, isSurveyed, notes };
}

/** One barn's sizing report: what its routine ropes give by each model, and its reading. */
export function barnSizing(ctx: PlanContext, entry: BarnReach, ropes: number): PlannedRound['barns'][number]['sizing'] {
  const { model } = entry;
  const { settings } = ctx.input;
  const target = ctx.input.site.program.targetConfidence;
  const plannedHypergeometric = model.hyper(ropes);
  const spreadEstimate = model.spread ? model.spread(ropes) : null;
  const bySpreadModel = ctx.spatialSizing && spreadEstimate !== null;
  const plannedChosen = bySpreadModel ? spreadEstimate.p : plannedHypergeometric;
  const ceiling = entry.reach.reachable ? null : entry.reach.ceiling;
  const roundsNeeded = entry.reach.reachable ? null : entry.reach.roundsNeeded;
  const statement: BarnReading =
    entry.reachable || ropes < model.pensInUse
      ? {
          kind: 'detection',
          ropes,
          detection: plannedChosen,
          designInfected: model.designInfected,
          pensInUse: model.pensInUse,
          bySpreadModel,
          assayId: model.assayId,
          sensitivity: model.sensitivity,
          reachable: entry.reachable,
          target,
          beside: spreadEstimate
            ? ctx.spatialSizing
              ? { kind: 'hypergeometric', detection: plannedHypergeometric, ropes: entry.hyperRopes }
              : { kind: 'spread', detection: spreadEstimate.p, standardError: spreadEstimate.standardError }
            : null,
        }
      : {
          kind: 'unreachable',
          barnId: model.barn.id,
          target,
          ceiling: ceiling ?? plannedChosen,
          designInfected: model.designInfected,
          pensInUse: model.pensInUse,
          roundsNeeded,
        };
  return {
    barnId: model.barn.id,
    assayId: model.assayId,
    pensInUse: model.pensInUse,
    designInfected: model.designInfected,
    sensitivity: model.sensitivity,
    model: bySpreadModel
      ? 'spread model (fixed spatial sampling under contagious spread)'
      : 'hypergeometric (random placement)',
    routineRopes: ropes,
    hypergeometricRopes: entry.hyperRopes,
    spreadModelRopes: entry.spreadRopes,
    reachable: entry.reachable,
    ceiling,
    roundsNeeded,
    statement,
    plannedDetection: plannedChosen,
    plannedHypergeometric,
    plannedSpreadModel: spreadEstimate ? spreadEstimate.p : null,
    spreadModel: spreadEstimate
      ? {
          standardError: spreadEstimate.standardError,
          realisations: model.spreadRealisations ?? spreadEstimate.realisations,
          seed: model.spreadSeed!,
          transmission: settings.spreadTransmission,
          background: settings.spreadBackground,
        }
      : null,
  };
}

/** What the routine ropes prove if they come back negative on time. */
export function ifNegative(
  ctx: PlanContext,
  routine: Routine,
  barns: PlannedRound['barns'],
  siteDetection: number,
): IfNegativeReading {
  // A monitored barn is known to be infected and an empty one holds no pigs: the least detection is that of the surveyed barns.
  const surveyed = barns.filter((barn) => routine.isSurveyed(barn.barnId));
  if (surveyed.length === 0) return { kind: 'none-surveyed' };
  const program = ctx.input.site.program;
  return {
    kind: program.sizeFor === 'barn' ? 'per-barn' : 'site',
    weakestBarn: Math.min(...surveyed.map((barn) => barn.sizing.plannedDetection)),
    siteDetection,
    target: program.targetConfidence,
    model: ctx.spatialSizing ? 'spatial' : 'hypergeometric',
    infectedBarns: ctx.infectedBarns,
    barns: ctx.models.length,
    design: program.designPrevalence,
  };
}
