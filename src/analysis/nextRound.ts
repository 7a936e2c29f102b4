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
  formatSampleId,
  isWriteFriendlyCheck,
  parseSampleId,
  onTimeVersusMissed,
  roundDue,
  smallestRopes,
  smallestRopesConservative,
  type Allocation,
  type PlanRow,
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
import { describeDesignPrevalence as describeDesign } from './roundSummary.js';
import type { OutbreakCache, RoundSpatial } from './spatialRound.js';
import { budgetForSurveyed, monitoredBarns, withMonitoring } from './monitoredPlan.js';
import { PLAN_SCHEMA, type BarnSizingReport, type NextRoundPlan, type PooledPlanRow } from './planTypes.js';

export { PLAN_SCHEMA, type BarnSizingReport, type NextRoundPlan, type PooledPlanRow } from './planTypes.js';
import { formatPercent } from '../util/format.js';
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

/** Relabels rows with the IDs an earlier version of this plan gave the same pens; new pens get fresh, unused sequences. */
function keepEarlierIds(
  rows: readonly PlanRow[],
  site: Site,
  round: number,
  existing: ReadonlyMap<string, string> | undefined,
): PlanRow[] {
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

/**
 * Puts each barn's routine ropes, in walking order, into pools of `poolSize` (the last pool of a
 * barn takes what is left; a pool of one is no pool). Retest and follow-up ropes are tested on
 * their own: their point is to name the pen. Pool IDs have the sample-ID grammar with its check
 * character (ISO/IEC 7064 MOD 37-2), on sequences after every rope's, so a mistyped pool ID is
 * caught on ingest like a mistyped sample ID.
 */
function assignPools(
  rows: readonly PlanRow[],
  site: Site,
  round: number,
  poolSize: number,
  existing: ReadonlyMap<string, string> | undefined,
): PooledPlanRow[] {
  if (poolSize < 2) return [...rows];
  const taken = new Set([...rows.map((row) => row.sampleId), ...(existing?.values() ?? [])]);
  let sequence = 0;
  for (const id of taken) {
    const parsed = parseSampleId(id);
    if (parsed.ok) sequence = Math.max(sequence, parsed.sequence);
  }
  const nextPoolId = (): string | undefined => {
    while (sequence < 999) {
      sequence++;
      const id = formatSampleId({ siteCode: site.code, round, sequence });
      if (isWriteFriendlyCheck(id) && !taken.has(id)) return id;
    }
    return undefined;
  };
  const poolOf = new Map<PlanRow, string>();
  for (const barn of site.barns) {
    const routine = rows.filter((row) => row.barnId === barn.id && row.reason === 'routine');
    for (let start = 0; start + 1 < routine.length; start += poolSize) {
      const members = routine.slice(start, start + poolSize);
      if (members.length < 2) break;
      const poolId = nextPoolId();
      // Out of sequences (999 per round): the rest are tested on their own.
      if (poolId === undefined)
        return rows.map((row) => (poolOf.has(row) ? { ...row, poolId: poolOf.get(row)! } : row));
      for (const member of members) poolOf.set(member, poolId);
    }
  }
  return rows.map((row) => (poolOf.has(row) ? { ...row, poolId: poolOf.get(row)! } : row));
}

/** Plans the next round of a site. */
export function planNextRound(input: PlanInput): NextRoundPlan {
  const { site, rounds, settings } = input;
  const program = site.program;
  const last = rounds.at(-1);
  const roundNumber = (last?.number ?? 0) + 1;
  const due = last
    ? roundDue(last.startOn, program.intervalDays, input.today)
    : { dueDate: input.today, daysUntilDue: 0, overdue: false, daysOverdue: 0 };
  // Follow-ups and retests come from the last round with results: a round whose ropes are out
  // and whose results are not yet due (or never came) has nothing to follow up. The freedom
  // forecast starts from the last round in the freedom chain (an awaiting round is not in it).
  const lastIndexWhere = (keep: (round: SiteRound) => boolean) => {
    let index = rounds.length - 1;
    while (index >= 0 && !keep(rounds[index]!)) index--;
    return index;
  };
  const basisIndex = lastIndexWhere((round) => round.barns.some((barn) => barn.ropesReturned > 0));
  const freedomIndex = lastIndexWhere((round) => round.state !== 'awaiting-results');
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
  const notes: string[] = [];
  const sizingNotes: string[] = [];
  const target = program.targetConfidence;
  const budget = input.budget ?? program.ropeBudget ?? null;

  const spatialSizing = settings.sizingModel === 'spatial';
  const chosenDetect = (model: BarnModel) =>
    spatialSizing && model.spread ? (n: number) => model.spread!(n).p : model.hyper;
  // Site-level sizing with D of the site's H barns infected (two-stage; Cameron & Baldock 1998):
  // barns alike at p each give 1 - (1 - p)^D, so each barn is sized to p = 1 - (1 - C)^(1/D).
  // Every infected set then detects with at least C, so the two-stage site figure does too.
  const infectedBarns = designBarnsFor(program, models.length);
  const barnTarget = program.sizeFor === 'site' ? barnTargetForSite(target, infectedBarns) : target;
  const perBarn = models.map((model) => {
    const reach = smallestRopes(model.hyper, barnTarget, model.pensInUse);
    const hyperRopes = reach.reachable ? reach.ropes : null;
    // The spread model sizes only when chosen, and then by its estimate less two Monte Carlo
    // standard errors, so that another seed does not move the count.
    const spreadReach =
      spatialSizing && model.spread ? smallestRopesConservative(model.spread, barnTarget, model.pensInUse) : null;
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

  // A barn run all-in/all-out that will stand empty on the due date (closed out, next group not
  // yet placed) gets no rope, and no share of a budget: there are no pigs to find.
  const emptyOnDue = new Set(
    models
      .filter((model) => barnStatusOn(model.barn.groups, due.dueDate).kind === 'empty')
      .map((model) => model.barn.id),
  );
  const isSurveyed = (barnId: string) => !monitored.has(barnId) && !emptyOnDue.has(barnId);
  let allocation: Allocation | null = null;
  let routine = perBarn.map((entry) => (isSurveyed(entry.model.barn.id) ? entry.ropes : 0));
  const total = routine.reduce((sum, n) => sum + n, 0);
  const infectedWords =
    infectedBarns === models.length
      ? `every one of its ${models.length} barns infected`
      : `${infectedBarns} of its ${models.length} barns infected (barns at random)`;
  sizingNotes.push(
    program.sizeFor === 'site'
      ? `The site target ${formatPercent(target)} with ${infectedWords} is met when each barn reaches ${formatPercent(barnTarget)} (1 - (1 - C)^(1/D), D = ${infectedBarns}): ${total} routine ropes.`
      : `Each barn is sized to reach ${formatPercent(target)} on its own: ${total} routine ropes.`,
  );
  const surveyBudget = budgetForSurveyed(budget, monitored);
  if (surveyBudget !== null && total > surveyBudget) {
    const barnSizing = models
      .filter((model) => isSurveyed(model.barn.id))
      .map((model) => ({ barnId: model.barn.id, maxRopes: model.pensInUse, detect: chosenDetect(model) }));
    allocation = allocateRopesBalanced(barnSizing, surveyBudget);
    routine = models.map((model) => allocation!.ropes.find((entry) => entry.barnId === model.barn.id)?.ropes ?? 0);
    const weakest = Math.min(...allocation.ropes.map((entry) => entry.detection));
    sizingNotes.push(
      `That is more than the budget of ${surveyBudget} ropes, so the budget is shared so that the least-watched barn is as well watched as possible (${formatPercent(weakest)}), ` +
        `then to the highest site detection (${formatPercent(allocation.siteDetection)}), both exactly by dynamic programming. ` +
        'Maximising site detection alone would put every rope in one barn and leave the others unwatched.',
    );
  }
  const spreadAssumptions =
    `infection passed pen to pen over fence, facing and diagonal contacts from one pen chosen at random until the design number of pens is infected, transmission ${settings.spreadTransmission} per contact and step, ` +
    `background ${settings.spreadBackground} per pen and step, ${settings.spreadRealisations} simulated outbreaks per barn (seed ${settings.seed})`;
  sizingNotes.push(
    spatialSizing
      ? `Ropes are sized with the spread model (${spreadAssumptions}), by its estimate less two Monte Carlo standard errors, so that another seed seldom moves the count (near the boundary it still can: more outbreaks make that rarer). ` +
          'It holds only if infection spreads between neighbouring pens as modelled; the hypergeometric count, which holds wherever infection first lands, is shown beside it.'
      : 'Ropes are sized with the hypergeometric model (Cameron & Baldock 1998): the infected pens may be any pens of the barn, so the count holds whatever places infection first. ' +
          `Beside it, the spread model (${spreadAssumptions}) shows what fixed, evenly spaced ropes buy when infection spreads pen to pen.`,
  );

  const pensWhere = (barnId: string, key: 'positivePens' | 'suspectPens' | 'invalidPens', measure?: Measure) => [
    ...new Set(
      Object.entries(basis?.barns.find((barn) => barn.barnId === barnId)?.byAssay ?? {})
        .filter(([assayId]) => measure === undefined || measureOf(assayId) === measure)
        .flatMap(([, tally]) => tally[key]),
    ),
  ];
  const lastSpatial = basisIndex < 0 ? undefined : input.spatial[basisIndex];
  if (last && basis !== last) {
    notes.push(
      (last.state === 'awaiting-results'
        ? `Round ${last.number} is awaiting its results (due by ${last.resultsDueOn}): `
        : `Round ${last.number} brought no result back: `) +
        (basis
          ? `follow-up and retest ropes come from round ${basis.number}, the last round with results.`
          : 'no round has results to follow up yet.'),
    );
  }
  const clustersOf = (barnId: string) =>
    (lastSpatial?.assays ?? [])
      .filter((assay) => measureOf(assay.assayId) === 'ct')
      .flatMap(
        (assay) =>
          assay.report.barns.find((barn) => barn.barn === barnId)?.clusters.map((cluster) => cluster.pens) ?? [],
      );
  /** Antibody-positive pens with no PCR positive: retested (by PCR), not ringed with follow-up ropes. */
  const antibodyOnly = (barnId: string) => {
    const virus = new Set(pensWhere(barnId, 'positivePens', 'ct'));
    return pensWhere(barnId, 'positivePens', 'sp-ratio').filter((pen) => !virus.has(pen));
  };

  // With a cap on follow-up ropes, the ring pens are chosen by simulated onward spread from the
  // positives (two steps of the spread model, about one interval): greedy on a submodular gain.
  const onwardDetect = (model: BarnModel, positives: readonly string[]) => {
    if (program.followUpRopes === undefined || positives.length === 0) return undefined;
    const inUse = inUsePens(model.barn.pens).map((pen) => pen.id);
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
    return (pens: readonly string[]) =>
      detectionProbability(
        onward,
        pens.filter((id) => inUse.includes(id)),
        model.sensitivity,
      ).p;
  };
  if (program.followUpRopes !== undefined) {
    notes.push(
      `Follow-up ropes: at most ${program.followUpRopes} per barn, chosen one by one for the largest simulated gain in finding onward spread from the positives (greedy on a submodular objective: within 1 - 1/e of the best set; Nemhauser, Wolsey & Fisher 1978).`,
    );
  }

  const antibodyRetests = models.flatMap((model) =>
    antibodyOnly(model.barn.id).map((pen) => `${model.barn.id} ${pen}`),
  );
  if (antibodyRetests.length > 0) {
    notes.push(
      `Antibody positive without virus in ${antibodyRetests.join(', ')}: a retest rope each, to be tested by PCR (antibody means exposure, not necessarily current infection; no follow-up ring is drawn around it).`,
    );
  }
  for (const barnId of emptyOnDue)
    notes.push(
      `Barn ${barnId} will be empty on ${due.dueDate} (its group closed out, the next not yet placed): no rope is planned there.`,
    );
  const plan = buildRoundPlan({
    siteCode: site.code,
    round: roundNumber,
    dueDate: due.dueDate,
    barns: models.map((model, index) => {
      if (emptyOnDue.has(model.barn.id))
        return {
          barnId: model.barn.id,
          layout: model.barn.layout,
          roundIndex: rounds.length,
          routineRopes: 0,
          positives: [],
          suspects: [],
          invalids: [],
          clusters: [],
          ringDistance: program.followUpRadius,
        };
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
        ...(monitored.has(model.barn.id)
          ? { monitoring: { reRope: monitored.get(model.barn.id)!.reRope, trackingRopes: program.trackingRopes } }
          : {}),
      };
    }),
  });
  const rows = assignPools(
    keepEarlierIds(
      plan.rows.map((row) => ({ ...row, siteId: site.id })),
      site,
      roundNumber,
      input.existingIds,
    ),
    site,
    roundNumber,
    program.pooling?.poolSize ?? 1,
    input.existingIds,
  );
  const positivePools = models.flatMap((model) =>
    Object.values(last?.barns.find((barn) => barn.barnId === model.barn.id)?.byAssay ?? {}).flatMap((tally) =>
      (tally.positivePoolPens ?? []).map((pen) => `${model.barn.id} ${pen}`),
    ),
  );
  if (positivePools.length > 0) {
    notes.push(
      `Positive pool in ${[...new Set(positivePools)].join(', ')}: a retest rope each, tested on its own, to find which pens of the pool carry the infection.`,
    );
  }
  const pooling = program.pooling;
  if (pooling !== undefined && pooling.poolSize > 1) {
    // The routine ropes are sized as if tested one by one; pooled, they detect less (hypergeometric, exact over the barn's pens).
    const pooledFigures = models.map((model, index) => {
      const ropes = Math.min(routine[index]!, model.pensInUse);
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
      return `${model.barn.id} ${formatPercent(pooled)} pooled against ${formatPercent(model.hyper(ropes))} one by one`;
    });
    notes.push(
      `Routine ropes go into pools of ${pooling.poolSize} ropes of one barn (column pool); the lab tests each pool in one PCR and reports it under the pool ID. Retest and follow-up ropes are tested on their own. ` +
        `At pool sensitivity ${pooling.poolSensitivity}, random placement: ${pooledFigures.join(', ')}.`,
    );
  }

  const barns = plan.barns.map((summary, index) => {
    const model = models[index]!;
    const entry = perBarn[index]!;
    const ropes = routine[index]!;
    const plannedHypergeometric = model.hyper(ropes);
    const spreadEstimate = model.spread ? model.spread(ropes) : null;
    const plannedChosen = spatialSizing && spreadEstimate ? spreadEstimate.p : plannedHypergeometric;
    const ceiling = entry.reach.reachable ? null : entry.reach.ceiling;
    const design = `${model.designInfected} infected pen${model.designInfected === 1 ? '' : 's'} of ${model.pensInUse}`;
    const modelWords = spatialSizing && spreadEstimate ? 'by the spread model' : 'infected pens anywhere in the barn';
    const beside = spreadEstimate
      ? spatialSizing
        ? ` The hypergeometric model gives the same ropes ${formatPercent(plannedHypergeometric)}${entry.hyperRopes !== null ? ` and would ask for ${entry.hyperRopes}` : ''}.`
        : ` Under contagious spread (spread model) these evenly spaced ropes would detect ${formatPercent(spreadEstimate.p)} (Monte Carlo standard error ${formatPercent(spreadEstimate.standardError)}).`
      : '';
    const statement =
      entry.reachable || ropes < model.pensInUse
        ? `The systematic layer of ${ropes} ropes gives ${formatPercent(plannedChosen)} detection at ${design}, ${modelWords} (${model.assayId}, rope sensitivity ${model.sensitivity})` +
          (entry.reachable
            ? '.'
            : `; ${formatPercent(target)} is out of reach in one round even with a rope in every pen.`) +
          beside
        : `No single round reaches ${formatPercent(target)} in barn ${model.barn.id}: even a rope in every pen gives ${formatPercent(ceiling ?? plannedChosen)} at ${design}` +
          (!entry.reach.reachable && entry.reach.roundsNeeded !== null
            ? `; ${entry.reach.roundsNeeded} negative rounds in a row would.`
            : '.');
    const sizing: BarnSizingReport = {
      barnId: model.barn.id,
      assayId: model.assayId,
      pensInUse: model.pensInUse,
      designInfected: model.designInfected,
      sensitivity: model.sensitivity,
      model:
        spatialSizing && spreadEstimate
          ? 'spread model (fixed spatial sampling under contagious spread)'
          : 'hypergeometric (random placement)',
      routineRopes: ropes,
      hypergeometricRopes: entry.hyperRopes,
      spreadModelRopes: entry.spreadRopes,
      reachable: entry.reachable,
      ceiling,
      roundsNeeded: entry.reach.reachable ? null : entry.reach.roundsNeeded,
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
    return { ...summary, sizing };
  });

  const siteDetectionIfNegative = twoStageSiteDetection(
    barns.map((barn) => barn.sizing.plannedDetection),
    infectedBarns,
  );
  const modelName = spatialSizing ? 'spread model' : 'hypergeometric model';
  const siteWords =
    infectedBarns === models.length
      ? `if every barn were infected at ${describeDesign(site)}`
      : infectedBarns === 1
        ? 'if only one barn were infected'
        : `if only ${infectedBarns} of the ${models.length} barns were infected`;
  // A monitored barn is known to be infected and an empty one holds no pigs: the least detection is that of the surveyed barns.
  const surveyed = barns.filter((barn) => isSurveyed(barn.barnId));
  const weakestBarn = Math.min(...surveyed.map((barn) => barn.sizing.plannedDetection));
  const ifNegative =
    surveyed.length === 0
      ? 'No barn is surveyed for detection this round (every barn is positive and monitored, or empty): no detection figure applies.'
      : program.sizeFor === 'barn'
        ? `If they all come back negative on time, each barn has at least ${formatPercent(weakestBarn)} detection confidence at the design prevalence (target ${formatPercent(target)} per barn, ${modelName}); the site ${formatPercent(siteDetectionIfNegative)} ${siteWords}.`
        : `If they all come back negative on time, the site has ${formatPercent(siteDetectionIfNegative)} detection confidence ${siteWords} (target ${formatPercent(target)} for the site, ${modelName}).`;
  let freedom: NextRoundPlan['freedom'] = null;
  const lastConfidence = freedomIndex < 0 ? undefined : input.confidence[freedomIndex];
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
      ...onTimeVersusMissed({
        currentFreedom,
        roundSensitivity: siteDetectionIfNegative,
        introductionPerInterval: program.introductionPerInterval,
        intervalDays: program.intervalDays,
      }),
    };
  }
  if (due.overdue)
    notes.push(
      `The round was due on ${due.dueDate}: ${due.daysOverdue} days overdue. Every day late adds introduction risk.`,
    );

  const seed = deriveSeed(settings.seed, site.id, 'plan', roundNumber);
  const schedules = models.map((model, index) => {
    const ropes = Math.max(1, routine[index]!);
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

  return withMonitoring(
    {
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
      sizing: {
        sizingModel: settings.sizingModel,
        sizeFor: program.sizeFor,
        infectedBarns,
        ifNegative,
        target,
        budget,
        allocation,
        notes: sizingNotes,
      },
      siteDetectionIfNegative,
      freedom,
      schedules,
      seed,
      notes,
    },
    monitored,
    program.clearAfterNegativeRounds,
  );
}
