/**
 * What the last round with results asks of the next one: its positive, suspect and invalid pens
 * and clusters per barn, the follow-up and retest ropes the round planner places from them,
 * and the notes on results still missing, antibody retests, empty barns and pools. Pure.
 */
import type { Measure } from '../config/types.js';
import type { BarnRoundInput } from '../plan/index.js';
import { contactWeights, detectionProbability, simulateOnwardSpread } from '../spatial/index.js';
import { pooledDetection } from '../stats/index.js';
import { deriveSeed, seededRng } from '../util/random.js';
import type { PlanNote } from './planTypes.js';
import { inUsePens } from '../domain/layout.js';
import type { BarnModel, PlanContext } from './planContext.js';
import type { Routine } from './planSizing.js';

/** What the last round with results says per barn: its positive, suspect and invalid pens, its clusters. */
export interface Findings {
  pensWhere: (barnId: string, key: 'positivePens' | 'suspectPens' | 'invalidPens', measure?: Measure) => string[];
  clustersOf: (barnId: string) => string[][];
  /** Antibody-positive pens with no PCR positive: retested (by PCR), not ringed with follow-up ropes. */
  antibodyOnly: (barnId: string) => string[];
}

export function findings(ctx: PlanContext): Findings {
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
export function onwardDetect(ctx: PlanContext, model: BarnModel, positives: readonly string[]) {
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
export function followUpNotes(ctx: PlanContext, found: Findings, routine: Routine): PlanNote[] {
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
export function barnPlanInputs(ctx: PlanContext, found: Findings, routine: Routine): BarnRoundInput[] {
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
export function poolingNotes(ctx: PlanContext, routine: Routine): PlanNote[] {
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
