/**
 * The next round's plan for a site: how many routine ropes each barn needs (or the site's budget
 * allows), where they go (fixed spatial sampling on the real layout, rotating each round), the
 * follow-up and retest ropes after the last round, the due date, what the round will prove if
 * it comes back negative on time, and how other schedules with the same ropes per month compare.
 * Pure: the round model, its confidence and spatial analysis, the clock value and the earlier
 * plan (for stable sample IDs) come in; a plain value goes out.
 */
import type { AnalysisSettings, Barn, Measure, Site } from '../config/types.js';
import type { SiteRound } from '../interpret/roundModel.js';
import {
  allocateRopesBalanced,
  barnTargetForSite,
  buildRoundPlan,
  compareSchedules,
  compareSchedulesGrowing,
  formatSampleId,
  isWriteFriendlyCheck,
  onTimeVersusMissed,
  placeSystematic,
  roundDue,
  smallestRopes,
  type Allocation,
  type BarnPlanSummary,
  type OnTimeVersusMissed,
  type PlanRow,
  type ScheduleOption,
  type SimulatedDelay,
} from '../plan/index.js';
import { contactWeights, detectionProbability, simulateOnwardSpread } from '../spatial/index.js';
import { detectionFor, siteDetection } from '../stats/index.js';
import { deriveSeed, seededRng } from '../util/random.js';
import { designInfectedFor, ropeAccuracy, type RoundConfidence } from './confidence.js';
import type { OutbreakCache, RoundSpatial } from './spatialRound.js';
import { budgetForSurveyed, monitoredBarns, withMonitoring, type MonitoredBarn } from './monitoredPlan.js';
import { formatPercent } from '../util/format.js';

export const PLAN_SCHEMA = 'ropewatch.next-round/1';
/** Doubling time of infected pens in the growing-infection comparison: a modelling assumption. */
export const GROWTH_DOUBLING_DAYS = 7;

export interface BarnSizingReport {
  barnId: string;
  assayId: string;
  pensInUse: number;
  designInfected: number;
  sensitivity: number;
  /** Which detection model sized the routine ropes. */
  model: 'spread model (fixed spatial sampling under contagious spread)' | 'hypergeometric (random placement)';
  routineRopes: number;
  /** Ropes the hypergeometric model alone would ask for (for comparison). */
  hypergeometricRopes: number | null;
  reachable: boolean;
  /** When one round cannot reach the target: the best one round can do, and the rounds that would. */
  ceiling: number | null;
  roundsNeeded: number | null;
  statement: string;
  /** Detection confidence of the planned routine ropes, by both models. */
  plannedHypergeometric: number;
  plannedSpreadModel: number | null;
}

export interface NextRoundPlan {
  schema: typeof PLAN_SCHEMA;
  site: { id: string; name: string; code: string };
  basedOn: { round: number; id: string; startOn: string } | null;
  round: number;
  dueDate: string;
  overdue: boolean;
  daysOverdue: number;
  daysUntilDue: number;
  ropes: PlanRow[];
  /** `monitoring`: the barn is positive and monitored instead of surveyed (src/analysis/monitoredPlan.ts). */
  barns: (BarnPlanSummary & { sizing: BarnSizingReport; monitoring?: MonitoredBarn })[];
  sizing: {
    sizeFor: 'barn' | 'site';
    target: number;
    budget: number | null;
    allocation: Allocation | null;
    notes: string[];
  };
  /** Site detection of the routine ropes if the round comes back negative. */
  siteDetectionIfNegative: number;
  freedom: (OnTimeVersusMissed & { assayId: string; currentFreedom: number }) | null;
  schedules: {
    barnId: string;
    static: ScheduleOption[];
    growing: (ScheduleOption & { simulated: SimulatedDelay })[];
    notes: string[];
  }[];
  seed: number;
  notes: string[];
}

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
  spread: ((ropes: number) => number) | null;
}

function barnModels(input: PlanInput, assays: readonly string[]): BarnModel[] {
  const { site, settings, cache } = input;
  const roundIndex = input.rounds.length;
  return site.barns.map((barn) => {
    const inUse = barn.pens.filter((pen) => pen.status === 'in-use');
    const pensInUse = inUse.length;
    const designInfected = designInfectedFor(site.program, pensInUse);
    // Size for the assay that needs the most ropes: the one with the lowest rope sensitivity.
    const assayId = [...assays].sort((a, b) => ropeAccuracy(site.program, a, barn).sensitivity - ropeAccuracy(site.program, b, barn).sensitivity || (a < b ? -1 : 1))[0] ?? 'default';
    const sensitivity = ropeAccuracy(site.program, assayId, barn).sensitivity;
    const hyperKernel = detectionFor({ pens: pensInUse, infected: designInfected, sensitivity });
    const outbreaks = settings.sizingModel === 'spatial' ? cache.outbreaksFor(site, barn, designInfected) : null;
    const spreadMemo = new Map<number, number>();
    const spread = outbreaks
      ? (ropes: number) => {
          if (ropes === 0) return 0;
          let value = spreadMemo.get(ropes);
          if (value === undefined) {
            const placement = placeSystematic(barn.pens, { ropes, roundIndex });
            value = detectionProbability(outbreaks, placement.penIds, sensitivity).p;
            spreadMemo.set(ropes, value);
          }
          return value;
        }
      : null;
    return { barn, assayId, pensInUse, designInfected, sensitivity, hyper: (ropes: number) => hyperKernel(Math.min(ropes, pensInUse)), spread };
  });
}

/** Smallest n reaching the target by a linear scan: the Monte Carlo estimate need not be exactly monotone. */
function smallestByScan(detect: (n: number) => number, target: number, max: number): number | null {
  for (let n = 1; n <= max; n++) if (detect(n) >= target) return n;
  return null;
}

/** Relabels rows with the IDs an earlier version of this plan gave the same pens; new pens get fresh, unused sequences. */
function keepEarlierIds(rows: readonly PlanRow[], site: Site, round: number, existing: ReadonlyMap<string, string> | undefined): PlanRow[] {
  if (!existing || existing.size === 0) return [...rows];
  const earlierIds = new Set(existing.values());
  const withEarlier = rows.map((row) => ({ row, earlier: existing.get(`${row.barnId}/${row.penId}`) }));
  const taken = new Set(withEarlier.flatMap((entry) => (entry.earlier ? [entry.earlier] : [])));
  let sequence = 0;
  const freshId = (): string => {
    for (;;) {
      sequence++;
      const id = formatSampleId({ siteCode: site.code, round, sequence });
      if (isWriteFriendlyCheck(id) && !taken.has(id) && !earlierIds.has(id)) return id;
    }
  };
  return withEarlier.map(({ row, earlier }) => {
    const sampleId = earlier ?? (taken.has(row.sampleId) || earlierIds.has(row.sampleId) ? freshId() : row.sampleId);
    taken.add(sampleId);
    return { ...row, sampleId };
  });
}

/** Plans the next round of a site. */
export function planNextRound(input: PlanInput): NextRoundPlan {
  const { site, rounds, settings } = input;
  const program = site.program;
  const last = rounds.at(-1);
  const roundNumber = (last?.number ?? 0) + 1;
  const due = last ? roundDue(last.startOn, program.intervalDays, input.today) : { dueDate: input.today, daysUntilDue: 0, overdue: false, daysOverdue: 0 };
  const measureOf = (assayId: string): Measure => last?.measures[assayId] ?? input.measureOf?.(assayId) ?? 'ct';
  const candidates = last?.assays.length ? last.assays : Object.keys(program.ropeSensitivity.byAssay);
  // The plan is for finding virus: PCR assays size it, and their positives draw follow-up ropes.
  // An antibody assay sizes it only when no PCR assay is tested; an antibody positive pen
  // without a PCR positive gets a retest rope (its rope is tested by PCR: common practice, no source).
  const pcrAssays = candidates.filter((assayId) => measureOf(assayId) === 'ct');
  const assays = pcrAssays.length > 0 ? pcrAssays : candidates;
  const models = barnModels(input, assays);
  // Barns positive after the last round are monitored, not sized for detection.
  const monitored = monitoredBarns(site, input.confidence.at(-1), rounds, assays);
  const notes: string[] = [];
  const sizingNotes: string[] = [];
  const target = program.targetConfidence;
  const budget = input.budget ?? program.ropeBudget ?? null;

  const chosenDetect = (model: BarnModel) => model.spread ?? model.hyper;
  // Site-level sizing (Martin, Cameron & Greiner 2007, the all-barns form inverted): each of k barns needs 1 - (1 - C)^(1/k).
  const barnTarget = program.sizeFor === 'site' ? barnTargetForSite(target, models.length) : target;
  const perBarn = models.map((model) => {
    const reach = smallestRopes(model.hyper, barnTarget, model.pensInUse);
    const hyperRopes = reach.reachable ? reach.ropes : null;
    const spreadRopes = model.spread ? smallestByScan(model.spread, barnTarget, model.pensInUse) : null;
    return { model, reach, hyperRopes, ropes: model.spread ? (spreadRopes ?? model.pensInUse) : (hyperRopes ?? model.pensInUse), reachable: model.spread ? spreadRopes !== null : reach.reachable };
  });

  let allocation: Allocation | null = null;
  let routine = perBarn.map((entry) => (monitored.has(entry.model.barn.id) ? 0 : entry.ropes));
  const total = routine.reduce((sum, n) => sum + n, 0);
  sizingNotes.push(
    program.sizeFor === 'site'
      ? `The site target ${formatPercent(target)} is met across ${models.length} barns when each reaches ${formatPercent(barnTarget)} (1 - (1 - C)^(1/k)): ${total} routine ropes.`
      : `Each barn is sized to reach ${formatPercent(target)} on its own: ${total} routine ropes.`,
  );
  const surveyBudget = budgetForSurveyed(budget, monitored);
  if (surveyBudget !== null && total > surveyBudget) {
    const barnSizing = models.filter((model) => !monitored.has(model.barn.id)).map((model) => ({ barnId: model.barn.id, maxRopes: model.pensInUse, detect: chosenDetect(model) }));
    allocation = allocateRopesBalanced(barnSizing, surveyBudget);
    routine = models.map((model) => allocation!.ropes.find((entry) => entry.barnId === model.barn.id)?.ropes ?? 0);
    const weakest = Math.min(...allocation.ropes.map((entry) => entry.detection));
    sizingNotes.push(
      `That is more than the budget of ${surveyBudget} ropes, so the budget is shared so that the least-watched barn is as well watched as possible (${formatPercent(weakest)}), ` +
        `then to the highest site detection (${formatPercent(allocation.siteDetection)}), both exactly by dynamic programming. ` +
        'Maximising site detection alone would put every rope in one barn and leave the others unwatched.',
    );
  }
  sizingNotes.push(
    settings.sizingModel === 'spatial'
      ? `Ropes are sized with the spread model (infection passed pen to pen, transmission ${settings.spreadTransmission} per contact and step, ${settings.spreadRealisations} simulated outbreaks): it credits fixed spatial sampling for covering the barn evenly. The hypergeometric count, which assumes infected pens fall at random, is shown beside it.`
      : 'Ropes are sized with the hypergeometric model (infected pens at random; Cameron & Baldock 1998).',
  );

  const pensWhere = (barnId: string, key: 'positivePens' | 'suspectPens' | 'invalidPens', measure?: Measure) =>
    [
      ...new Set(
        Object.entries(last?.barns.find((barn) => barn.barnId === barnId)?.byAssay ?? {})
          .filter(([assayId]) => measure === undefined || measureOf(assayId) === measure)
          .flatMap(([, tally]) => tally[key]),
      ),
    ];
  const lastSpatial = input.spatial.at(-1);
  const clustersOf = (barnId: string) =>
    (lastSpatial?.assays ?? [])
      .filter((assay) => measureOf(assay.assayId) === 'ct')
      .flatMap((assay) => assay.report.barns.find((barn) => barn.barn === barnId)?.clusters.map((cluster) => cluster.pens) ?? []);
  /** Antibody-positive pens with no PCR positive: retested (by PCR), not ringed with follow-up ropes. */
  const antibodyOnly = (barnId: string) => {
    const virus = new Set(pensWhere(barnId, 'positivePens', 'ct'));
    return pensWhere(barnId, 'positivePens', 'sp-ratio').filter((pen) => !virus.has(pen));
  };

  // With a cap on follow-up ropes, the ring pens are chosen by simulated onward spread from the
  // positives (two steps of the spread model, about one interval): greedy on a submodular gain.
  const onwardDetect = (model: BarnModel, positives: readonly string[]) => {
    if (program.followUpRopes === undefined || positives.length === 0) return undefined;
    const inUse = model.barn.pens.filter((pen) => pen.status === 'in-use').map((pen) => pen.id);
    const seeds = positives.filter((id) => inUse.includes(id));
    if (seeds.length === 0) return undefined;
    const onward = simulateOnwardSpread(contactWeights(model.barn.layout, inUse, 'queen', 'binary'), {
      seeds,
      steps: 2,
      beta: settings.spreadTransmission,
      background: settings.spreadBackground,
      realisations: Math.min(2000, settings.spreadRealisations),
      rng: seededRng(deriveSeed(settings.seed, site.id, model.barn.id, 'onward', roundNumber)),
    });
    return (pens: readonly string[]) => detectionProbability(onward, pens.filter((id) => inUse.includes(id)), model.sensitivity).p;
  };
  if (program.followUpRopes !== undefined) {
    notes.push(`Follow-up ropes: at most ${program.followUpRopes} per barn, chosen one by one for the largest simulated gain in finding onward spread from the positives (greedy on a submodular objective: within 1 - 1/e of the best set; Nemhauser, Wolsey & Fisher 1978).`);
  }

  const antibodyRetests = models.flatMap((model) => antibodyOnly(model.barn.id).map((pen) => `${model.barn.id} ${pen}`));
  if (antibodyRetests.length > 0) {
    notes.push(
      `Antibody positive without virus in ${antibodyRetests.join(', ')}: a retest rope each, to be tested by PCR (antibody means exposure, not necessarily current infection; no follow-up ring is drawn around it).`,
    );
  }
  const plan = buildRoundPlan({
    siteCode: site.code,
    round: roundNumber,
    dueDate: due.dueDate,
    barns: models.map((model, index) => {
      const positives = pensWhere(model.barn.id, 'positivePens', 'ct');
      const detectSet = onwardDetect(model, positives);
      return {
        barnId: model.barn.id,
        layout: model.barn.layout,
        roundIndex: rounds.length,
        routineRopes: routine[index]!,
        positives,
        suspects: [...new Set([...pensWhere(model.barn.id, 'suspectPens'), ...antibodyOnly(model.barn.id)])],
        invalids: pensWhere(model.barn.id, 'invalidPens'),
        clusters: clustersOf(model.barn.id),
        ringDistance: program.followUpRadius,
        ...(program.followUpRopes !== undefined ? { maxExtraRopes: program.followUpRopes } : {}),
        ...(detectSet ? { detectSet } : {}),
        ...(monitored.has(model.barn.id) ? { monitoring: { reRope: monitored.get(model.barn.id)!.reRope, trackingRopes: program.trackingRopes } } : {}),
      };
    }),
  });
  const rows = keepEarlierIds(
    plan.rows.map((row) => ({ ...row, siteId: site.id })),
    site,
    roundNumber,
    input.existingIds,
  );

  const barns = plan.barns.map((summary, index) => {
    const model = models[index]!;
    const entry = perBarn[index]!;
    const ropes = routine[index]!;
    const plannedHypergeometric = model.hyper(ropes);
    const plannedSpreadModel = model.spread ? model.spread(ropes) : null;
    const ceiling = entry.reach.reachable ? null : entry.reach.ceiling;
    const design = `${model.designInfected} infected pen${model.designInfected === 1 ? '' : 's'} of ${model.pensInUse}`;
    const statement = entry.reachable || ropes < model.pensInUse
      ? `The systematic layer of ${ropes} ropes gives ${formatPercent(plannedSpreadModel ?? plannedHypergeometric)} detection at ${design} (${model.assayId}, rope sensitivity ${model.sensitivity})` +
        (entry.reachable ? '.' : `; ${formatPercent(target)} is out of reach in one round even with a rope in every pen.`)
      : `No single round reaches ${formatPercent(target)} in barn ${model.barn.id}: even a rope in every pen gives ${formatPercent(ceiling ?? plannedSpreadModel ?? plannedHypergeometric)} at ${design}` +
        (!entry.reach.reachable && entry.reach.roundsNeeded !== null ? `; ${entry.reach.roundsNeeded} negative rounds in a row would.` : '.');
    const sizing: BarnSizingReport = {
      barnId: model.barn.id,
      assayId: model.assayId,
      pensInUse: model.pensInUse,
      designInfected: model.designInfected,
      sensitivity: model.sensitivity,
      model: model.spread ? 'spread model (fixed spatial sampling under contagious spread)' : 'hypergeometric (random placement)',
      routineRopes: ropes,
      hypergeometricRopes: entry.hyperRopes,
      reachable: entry.reachable,
      ceiling,
      roundsNeeded: entry.reach.reachable ? null : entry.reach.roundsNeeded,
      statement,
      plannedHypergeometric,
      plannedSpreadModel,
    };
    return { ...summary, sizing };
  });

  const siteDetectionIfNegative = siteDetection(barns.map((barn) => barn.sizing.plannedSpreadModel ?? barn.sizing.plannedHypergeometric));
  let freedom: NextRoundPlan['freedom'] = null;
  const lastConfidence = input.confidence.at(-1);
  const freedomAssay = models[0]?.assayId;
  const lastSite = lastConfidence?.sites.find((entry) => entry.assayId === freedomAssay);
  if (lastSite && freedomAssay && lastSite.status?.state === 'positive') {
    notes.push(
      `The site is positive for ${freedomAssay} since round ${lastSite.status.sinceRound}: it is not free, so no probability of freedom is forecast. ` +
        `It leaves the positive state once every positive barn has had ${program.clearAfterNegativeRounds} negative round${program.clearAfterNegativeRounds === 1 ? '' : 's'} in a row; from there freedom builds up again from the prior ${formatPercent(program.priorFreedom)}.`,
    );
  } else if (lastSite && freedomAssay && (lastSite.freedomReset || lastSite.freedom === null)) {
    notes.push(
      `The last round was positive for ${freedomAssay}: the site is not free, so no probability of freedom is forecast. ` +
        `Once the herd's veterinarian judges the outbreak over, negative rounds build freedom up again from the prior ${formatPercent(program.priorFreedom)}.`,
    );
  } else if (lastSite && freedomAssay && lastSite.freedom !== null) {
    const currentFreedom = lastSite.freedom;
    freedom = {
      assayId: freedomAssay,
      currentFreedom,
      ...onTimeVersusMissed({ currentFreedom, roundSensitivity: siteDetectionIfNegative, introductionPerInterval: program.introductionPerInterval, intervalDays: program.intervalDays }),
    };
  }
  if (due.overdue) notes.push(`The round was due on ${due.dueDate}: ${due.daysOverdue} days overdue. Every day late adds introduction risk.`);

  const seed = deriveSeed(settings.seed, site.id, 'plan', roundNumber);
  const schedules = models.map((model, index) => {
    const ropes = Math.max(1, routine[index]!);
    const statics = compareSchedules({ ropes, intervalDays: program.intervalDays, maxRopes: model.pensInUse, detect: model.hyper });
    const growing = compareSchedulesGrowing(
      { ropes, intervalDays: program.intervalDays, maxRopes: model.pensInUse },
      {
        initialInfected: 1,
        doublingDays: GROWTH_DOUBLING_DAYS,
        maxInfected: model.pensInUse,
        detectAt: (n, infected) => detectionFor({ pens: model.pensInUse, infected: Math.min(infected, model.pensInUse), sensitivity: model.sensitivity })(Math.min(n, model.pensInUse)),
      },
      { replicates: 2000, rng: seededRng(deriveSeed(seed, model.barn.id, 'schedules')) },
    );
    return { barnId: model.barn.id, static: statics.options, growing: growing.options, notes: [...statics.notes, ...growing.notes, `Infected pens double every ${GROWTH_DOUBLING_DAYS} days in the growing comparison (a modelling assumption).`] };
  });

  return withMonitoring({
    schema: PLAN_SCHEMA,
    site: { id: site.id, name: site.name, code: site.code },
    basedOn: last ? { round: last.number, id: last.id, startOn: last.startOn } : null,
    round: roundNumber,
    dueDate: due.dueDate,
    overdue: due.overdue,
    daysOverdue: due.daysOverdue,
    daysUntilDue: due.daysUntilDue,
    ropes: rows,
    barns,
    sizing: { sizeFor: program.sizeFor, target, budget, allocation, notes: sizingNotes },
    siteDetectionIfNegative,
    freedom,
    schedules,
    seed,
    notes,
  }, monitored, program.clearAfterNegativeRounds);
}
