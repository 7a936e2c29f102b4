/**
 * The next round's plan for a site: how many routine ropes each barn needs (or the site's budget
 * allows), where they go (fixed spatial sampling on the real layout, rotating each round), the
 * follow-up and retest ropes after the last round, the due date, what the round will prove if
 * it comes back negative on time, and how other schedules with the same ropes per month compare.
 * Pure: the round model, its confidence and spatial analysis, the clock value and the earlier
 * plan (for stable sample IDs) come in; a plain value goes out.
 */
import type { AnalysisSettings, Barn, Measure, Site } from '../config/types.js';
import type { SiteRound } from '../rounds/roundModel.js';
import {
  allocateRopesBalanced,
  buildRoundPlan,
  compareSchedules,
  compareSchedulesGrowing,
  onTimeVersusMissed,
  roundDue,
  smallestRopes,
  smallestRopesConservative,
  type Allocation,
  type BarnRoundInput,
  type Reached,
  type Unreachable,
} from '../plan/index.js';
import {
  contactWeights,
  detectionProbability,
  simulateOnwardSpread,
  type DetectionEstimate,
} from '../spatial/index.js';
import { barnTargetForSite, detectionFor, pooledDetection, twoStageSiteDetection } from '../stats/index.js';
import { deriveSeed, seededRng } from '../util/random.js';
import {
  designBarnsFor,
  designInfectedFor,
  ropeAccuracy,
  spreadEstimator,
  type RoundConfidence,
} from './confidence.js';
import type { OutbreakCache, RoundSpatial } from './spatialRound.js';
import { budgetForSurveyed, monitoredBarns, withMonitoring } from './monitoredPlan.js';
import {
  PLAN_SCHEMA,
  type BarnReading,
  type IfNegativeReading,
  type MonitoredBarn,
  type PlannedRound,
  type PlanNote,
  type SizingNote,
} from './planTypes.js';
import { assignPools, keepEarlierIds } from './planIds.js';

export {
  PLAN_SCHEMA,
  type BarnSizingReport,
  type NextRoundPlan,
  type PlannedRound,
  type PooledPlanRow,
} from './planTypes.js';
import { barnStatusOn } from '../rounds/pigGroups.js';
import { inUsePens } from '../domain/layout.js';

/** Doubling time of infected pens in the growing-infection comparison: a modelling assumption. */
export const GROWTH_DOUBLING_DAYS = 7;

export interface PlanInput {
  site: Site;
  rounds: readonly SiteRound[];
  confidence: readonly RoundConfidence[];
  spatial: readonly RoundSpatial[];
  settings: AnalysisSettings;
  cache: OutbreakCache;
  /** yyyy-mm-dd, from the injected clock. */
  today: string;
  /** Overrides the site's configured rope budget. */
  budget?: number;
  /** Sample IDs already planned for this round (pen -> ID), kept so a remade plan does not relabel tubes. */
  existingIds?: ReadonlyMap<string, string>;
  /** The measure of an assay (assays.yaml); Ct when not given. Antibody assays do not size the plan. */
  measureOf?: (assayId: string) => Measure;
}

interface BarnModel {
  barn: Barn;
  assayId: string;
  pensInUse: number;
  designInfected: number;
  sensitivity: number;
  hyper: (ropes: number) => number;
  /** The spread model's estimate for n fixed spatial ropes; null when it cannot run (no in-use pen, or fewer than d). */
  spread: ((ropes: number) => DetectionEstimate) | null;
  /** The seed of the simulated outbreaks, and how many there are. */
  spreadSeed: number | null;
  spreadRealisations: number | null;
}

function barnModels(input: PlanInput, assays: readonly string[]): BarnModel[] {
  const { site, cache } = input;
  const roundIndex = input.rounds.length;
  return site.barns.map((barn) => {
    const inUse = inUsePens(barn.pens);
    const pensInUse = inUse.length;
    const designInfected = designInfectedFor(site.program, pensInUse);
    // Size for the assay that needs the most ropes: the one with the lowest rope sensitivity.
    const assayId =
      [...assays].sort(
        (a, b) =>
          ropeAccuracy(site.program, a, barn).sensitivity - ropeAccuracy(site.program, b, barn).sensitivity ||
          (a < b ? -1 : 1),
      )[0] ?? 'default';
    const sensitivity = ropeAccuracy(site.program, assayId, barn).sensitivity;
    const hyperKernel = detectionFor({ pens: pensInUse, infected: designInfected, sensitivity });
    // The spread model is always evaluated, whichever model sizes: it is shown beside the
    // hypergeometric figure as what fixed spatial placement buys under contagious spread.
    const outbreaks = cache.outbreaksFor(site, barn, designInfected);
    const spread = outbreaks ? spreadEstimator(outbreaks, barn, sensitivity, roundIndex) : null;
    return {
      barn,
      assayId,
      pensInUse,
      designInfected,
      sensitivity,
      hyper: (ropes: number) => hyperKernel(Math.min(ropes, pensInUse)),
      spread,
      spreadSeed: outbreaks ? cache.seedFor(site, barn, designInfected) : null,
      spreadRealisations: outbreaks ? outbreaks.realisations : null,
    };
  });
}

/** What every step of the plan reads: the rounds it starts from, the barns' models, and the program. */
interface PlanContext {
  input: PlanInput;
  roundNumber: number;
  due: ReturnType<typeof roundDue>;
  last: SiteRound | undefined;
  /** The last round with results (follow-ups and retests come from it), and its index. */
  basis: SiteRound | undefined;
  basisIndex: number;
  /** The last round in the freedom chain (an awaiting round is not in it). */
  freedomIndex: number;
  measureOf: (assayId: string) => Measure;
  models: BarnModel[];
  monitored: Map<string, MonitoredBarn>;
  spatialSizing: boolean;
  infectedBarns: number;
  barnTarget: number;
}

function lastIndexWhere(rounds: readonly SiteRound[], keep: (round: SiteRound) => boolean): number {
  let index = rounds.length - 1;
  while (index >= 0 && !keep(rounds[index]!)) index--;
  return index;
}

function planContext(input: PlanInput): PlanContext {
  const { site, rounds } = input;
  const program = site.program;
  const last = rounds.at(-1);
  const due = last
    ? roundDue(last.startOn, program.intervalDays, input.today)
    : { dueDate: input.today, daysUntilDue: 0, overdue: false, daysOverdue: 0 };
  // Follow-ups and retests come from the last round with results: a round whose ropes are out
  // and whose results are not yet due (or never came) has nothing to follow up. The freedom
  // forecast starts from the last round in the freedom chain (an awaiting round is not in it).
  const basisIndex = lastIndexWhere(rounds, (round) => round.barns.some((barn) => barn.ropesReturned > 0));
  const freedomIndex = lastIndexWhere(rounds, (round) => round.state !== 'awaiting-results');
  const basis = basisIndex < 0 ? undefined : rounds[basisIndex];
  const measureOf = (assayId: string): Measure => basis?.measures[assayId] ?? input.measureOf?.(assayId) ?? 'ct';
  const candidates = basis?.assays.length ? basis.assays : Object.keys(program.ropeSensitivity.byAssay);
  // The plan is for finding virus: PCR assays size it, and their positives draw follow-up ropes.
  // An antibody assay sizes it only when no PCR assay is tested; an antibody positive pen
  // without a PCR positive gets a retest rope (its rope is tested by PCR: common practice, no source).
  const pcrAssays = candidates.filter((assayId) => measureOf(assayId) === 'ct');
  const assays = pcrAssays.length > 0 ? pcrAssays : candidates;
  const models = barnModels(input, assays);
  // Barns positive after the last round with results are monitored, not sized for detection (a
  // round still awaiting its results says nothing about them yet).
  const monitored = monitoredBarns(
    site,
    basisIndex < 0 ? undefined : input.confidence[basisIndex],
    rounds.slice(0, basisIndex + 1),
    assays,
  );
  // Site-level sizing with D of the site's H barns infected (two-stage; Cameron & Baldock 1998):
  // barns alike at p each give 1 - (1 - p)^D, so each barn is sized to p = 1 - (1 - C)^(1/D).
  // Every infected set then detects with at least C, so the two-stage site figure does too.
  const infectedBarns = designBarnsFor(program, models.length);
  const target = program.targetConfidence;
  const barnTarget = program.sizeFor === 'site' ? barnTargetForSite(target, infectedBarns) : target;
  return {
    input,
    roundNumber: (last?.number ?? 0) + 1,
    due,
    last,
    basis,
    basisIndex,
    freedomIndex,
    measureOf,
    models,
    monitored,
    spatialSizing: input.settings.sizingModel === 'spatial',
    infectedBarns,
    barnTarget,
  };
}

interface BarnReach {
  model: BarnModel;
  reach: Reached | Unreachable;
  hyperRopes: number | null;
  spreadRopes: number | null;
  ropes: number;
  reachable: boolean;
}

/** Each barn's ropes for the barn target, by the model that sizes. */
function sizeEachBarn(ctx: PlanContext): BarnReach[] {
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

interface Routine {
  /** Routine ropes per barn, in the site's barn order. */
  ropes: number[];
  allocation: Allocation | null;
  emptyOnDue: Set<string>;
  isSurveyed: (barnId: string) => boolean;
  notes: SizingNote[];
}

/** The routine ropes of the surveyed barns, shared out when they exceed the rope budget, and the sizing notes. */
function routineRopes(ctx: PlanContext, perBarn: readonly BarnReach[]): Routine {
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

/** What the last round with results says per barn: its positive, suspect and invalid pens, its clusters. */
interface Findings {
  pensWhere: (barnId: string, key: 'positivePens' | 'suspectPens' | 'invalidPens', measure?: Measure) => string[];
  clustersOf: (barnId: string) => string[][];
  /** Antibody-positive pens with no PCR positive: retested (by PCR), not ringed with follow-up ropes. */
  antibodyOnly: (barnId: string) => string[];
}

function findings(ctx: PlanContext): Findings {
  const { basis, basisIndex, measureOf } = ctx;
  const pensWhere: Findings['pensWhere'] = (barnId, key, measure) => [
    ...new Set(
      Object.entries(basis?.barns.find((barn) => barn.barnId === barnId)?.byAssay ?? {})
        .filter(([assayId]) => measure === undefined || measureOf(assayId) === measure)
        .flatMap(([, tally]) => tally[key]),
    ),
  ];
  const lastSpatial = basisIndex < 0 ? undefined : ctx.input.spatial[basisIndex];
  const clustersOf = (barnId: string) =>
    (lastSpatial?.assays ?? [])
      .filter((assay) => measureOf(assay.assayId) === 'ct')
      .flatMap(
        (assay) =>
          assay.report.barns.find((barn) => barn.barn === barnId)?.clusters.map((cluster) => cluster.pens) ?? [],
      );
  const antibodyOnly = (barnId: string) => {
    const virus = new Set(pensWhere(barnId, 'positivePens', 'ct'));
    return pensWhere(barnId, 'positivePens', 'sp-ratio').filter((pen) => !virus.has(pen));
  };
  return { pensWhere, clustersOf, antibodyOnly };
}

/**
 * With a cap on follow-up ropes, the ring pens are chosen by simulated onward spread from the
 * positives (two steps of the spread model, about one interval): greedy on a submodular gain.
 */
function onwardDetect(ctx: PlanContext, model: BarnModel, positives: readonly string[]) {
  const { site, settings } = ctx.input;
  if (site.program.followUpRopes === undefined || positives.length === 0) return undefined;
  const inUse = inUsePens(model.barn.pens).map((pen) => pen.id);
  const seeds = positives.filter((id) => inUse.includes(id));
  if (seeds.length === 0) return undefined;
  const onward = simulateOnwardSpread(contactWeights(model.barn.layout, inUse, 'queen', 'binary'), {
    seeds,
    steps: 2,
    beta: settings.spreadTransmission,
    background: settings.spreadBackground,
    realisations: Math.min(2000, settings.spreadRealisations),
    rng: seededRng(deriveSeed(settings.seed, site.id, model.barn.id, 'onward', ctx.roundNumber)),
  });
  return (pens: readonly string[]) =>
    detectionProbability(
      onward,
      pens.filter((id) => inUse.includes(id)),
      model.sensitivity,
    ).p;
}

/** The notes on where follow-up and retest ropes come from, in the plan's order. */
function followUpNotes(ctx: PlanContext, found: Findings, routine: Routine): PlanNote[] {
  const { last, basis, models } = ctx;
  const program = ctx.input.site.program;
  const notes: PlanNote[] = [];
  if (last && basis !== last)
    notes.push({
      kind: 'results-missing',
      round: last.number,
      awaiting: last.state === 'awaiting-results',
      resultsDueOn: last.resultsDueOn,
      basisRound: basis ? basis.number : null,
    });
  if (program.followUpRopes !== undefined) notes.push({ kind: 'follow-up-cap', ropes: program.followUpRopes });
  const antibodyRetests = models.flatMap((model) =>
    found.antibodyOnly(model.barn.id).map((pen) => `${model.barn.id} ${pen}`),
  );
  if (antibodyRetests.length > 0) notes.push({ kind: 'antibody-retests', pens: antibodyRetests });
  for (const barnId of routine.emptyOnDue) notes.push({ kind: 'empty-on-due', barnId, dueDate: ctx.due.dueDate });
  return notes;
}

/** What the round planner places in each barn: routine ropes, and follow-up, retest and monitoring ropes from the findings. */
function barnPlanInputs(ctx: PlanContext, found: Findings, routine: Routine): BarnRoundInput[] {
  const program = ctx.input.site.program;
  const roundIndex = ctx.input.rounds.length;
  return ctx.models.map((model, index) => {
    const barnId = model.barn.id;
    const common = { barnId, layout: model.barn.layout, roundIndex };
    if (routine.emptyOnDue.has(barnId))
      return {
        ...common,
        routineRopes: 0,
        positives: [],
        suspects: [],
        invalids: [],
        clusters: [],
        ringDistance: program.followUpRadius,
      };
    const positives = found.pensWhere(barnId, 'positivePens', 'ct');
    const detectSet = onwardDetect(ctx, model, positives);
    const monitored = ctx.monitored.get(barnId);
    return {
      ...common,
      routineRopes: routine.ropes[index]!,
      positives,
      suspects: [...new Set([...found.pensWhere(barnId, 'suspectPens'), ...found.antibodyOnly(barnId)])],
      invalids: found.pensWhere(barnId, 'invalidPens'),
      clusters: found.clustersOf(barnId),
      ringDistance: program.followUpRadius,
      ...(program.followUpRopes !== undefined ? { maxExtraRopes: program.followUpRopes } : {}),
      ...(detectSet ? { detectSet } : {}),
      ...(monitored ? { monitoring: { reRope: monitored.reRope, trackingRopes: program.trackingRopes } } : {}),
    };
  });
}

/** The notes on pools: retests of positive pools, and what pooling the routine ropes costs in detection. */
function poolingNotes(ctx: PlanContext, routine: Routine): PlanNote[] {
  const { models, last } = ctx;
  const notes: PlanNote[] = [];
  const positivePools = models.flatMap((model) =>
    Object.values(last?.barns.find((barn) => barn.barnId === model.barn.id)?.byAssay ?? {}).flatMap((tally) =>
      (tally.positivePoolPens ?? []).map((pen) => `${model.barn.id} ${pen}`),
    ),
  );
  if (positivePools.length > 0) notes.push({ kind: 'positive-pools', pens: [...new Set(positivePools)] });
  const pooling = ctx.input.site.program.pooling;
  if (pooling !== undefined && pooling.poolSize > 1) {
    // The routine ropes are sized as if tested one by one; pooled, they detect less (hypergeometric, exact over the barn's pens).
    const barns = models.map((model, index) => {
      const ropes = Math.min(routine.ropes[index]!, model.pensInUse);
      const pooled =
        model.pensInUse === 0 || model.designInfected === 0
          ? 0
          : pooledDetection(
              model.pensInUse,
              ropes,
              model.designInfected,
              pooling.poolSize,
              pooling.poolSensitivity,
              pooling.poolSpecificity,
            );
      return { barnId: model.barn.id, pooled, oneByOne: model.hyper(ropes) };
    });
    notes.push({ kind: 'pooling', poolSize: pooling.poolSize, poolSensitivity: pooling.poolSensitivity, barns });
  }
  return notes;
}

/** One barn's sizing report: what its routine ropes give by each model, and its reading. */
function barnSizing(ctx: PlanContext, entry: BarnReach, ropes: number): PlannedRound['barns'][number]['sizing'] {
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
function ifNegative(
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

/** The freedom forecast (on time against missed), or the note why there is none; and the overdue note. */
function freedomForecast(
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
function scheduleComparisons(ctx: PlanContext, routine: Routine, seed: number): PlannedRound['schedules'] {
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
      notes: [
        ...statics.notes,
        ...growing.notes,
        `Infected pens double every ${GROWTH_DOUBLING_DAYS} days in the growing comparison (a modelling assumption).`,
      ],
    };
  });
}

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
