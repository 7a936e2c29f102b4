/**
 * What every step of the next-round plan reads: the rounds it starts from (the last with
 * results, the last in the freedom chain), each barn's detection models, the monitored barns and
 * the barn target. Pure.
 */
import type { AnalysisSettings, Barn, Measure, Site } from '../config/types.js';
import type { SiteRound } from '../rounds/roundModel.js';
import { roundDue } from '../plan/index.js';
import type { DetectionEstimate } from '../spatial/index.js';
import { barnTargetForSite, detectionFor } from '../stats/index.js';
import {
  designBarnsFor,
  designInfectedFor,
  ropeAccuracy,
  spreadEstimator,
  type RoundConfidence,
} from './confidence.js';
import type { OutbreakCache, RoundSpatial } from './spatialRound.js';
import { monitoredBarns } from './monitoredPlan.js';
import type { MonitoredBarn } from './planTypes.js';
import { inUsePens } from '../domain/layout.js';

export interface PlanInput {
  site: Site;
  rounds: readonly SiteRound[];
  confidence: readonly RoundConfidence[];
  spatial: readonly (RoundSpatial | undefined)[];
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

export interface BarnModel {
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

export function barnModels(input: PlanInput, assays: readonly string[]): BarnModel[] {
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
export interface PlanContext {
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

/** The last round with results (-1 when none has any): the plan's follow-ups and retests come from it. */
export function planBasisIndex(rounds: readonly SiteRound[]): number {
  return lastIndexWhere(rounds, (round) => round.barns.some((barn) => barn.ropesReturned > 0));
}

export function planContext(input: PlanInput): PlanContext {
  const { site, rounds } = input;
  const program = site.program;
  const last = rounds.at(-1);
  const due = last
    ? roundDue(last.startOn, program.intervalDays, input.today)
    : { dueDate: input.today, daysUntilDue: 0, overdue: false, daysOverdue: 0 };
  // Follow-ups and retests come from the last round with results: a round whose ropes are out
  // and whose results are not yet due (or never came) has nothing to follow up. The freedom
  // forecast starts from the last round in the freedom chain (an awaiting round is not in it).
  const basisIndex = planBasisIndex(rounds);
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
