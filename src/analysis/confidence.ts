/**
 * What each round proved: detection confidence per barn and site at the program's design
 * prevalence, the ropes the target would have needed, prevalence when positives exist, and the
 * probability of freedom across rounds. Pure: the round model and the program come in.
 */
import { perAssayValue } from '../config/load.js';
import type { AnalysisSettings, Barn, Program, Site } from '../config/types.js';
import { placeSystematic, smallestRopesConservative } from '../plan/index.js';
import { detectionProbability, type DetectionEstimate, type Outbreaks } from '../spatial/index.js';
import type { SiteRound } from '../rounds/roundModel.js';
import { negativeRoundsRule, type ClearanceRule } from './barnStatus.js';
import {
  apparentPrevalence,
  designInfectedPens,
  detectionFor,
  falseAlarmProbability,
  pooledDetectionOfPools,
  sampleSize,
  truePrevalence,
} from '../stats/index.js';

import type { BarnConfidence, PooledConfidence, PrevalenceEstimate, RoundConfidence } from './confidenceTypes.js';
import { addSiteFreedom, barnFreedom, barnStatuses } from './siteFreedom.js';

export type {
  BarnConfidence,
  PooledConfidence,
  PrevalenceEstimate,
  SiteConfidence,
  RoundConfidence,
} from './confidenceTypes.js';
export { designBarnsFor, siteFigures } from './siteFreedom.js';

export function designInfectedFor(program: Program, pens: number): number {
  return program.designPrevalence.kind === 'pens'
    ? Math.min(pens, program.designPrevalence.value)
    : designInfectedPens(program.designPrevalence.value, pens);
}

/** Rope sensitivity and specificity of an assay in a barn (by its age group). */
export function ropeAccuracy(
  program: Program,
  assayId: string,
  barn: Barn,
): { sensitivity: number; specificity: number } {
  return {
    sensitivity: perAssayValue(program.ropeSensitivity, assayId, barn.ageGroup),
    specificity: perAssayValue(program.ropeSpecificity, assayId, barn.ageGroup),
  };
}

/** The simulated outbreaks a spread-model sizing draws on (OutbreakCache). */
export interface SpreadSizing {
  settings: AnalysisSettings;
  outbreaks: { outbreaksFor(site: Site, barn: Barn, infected: number): Outbreaks | null };
}

/**
 * The spread model's detection of n ropes laid out by fixed spatial sampling in round
 * `roundIndex` (placeSystematic), memoised: the plan and the summary read the same estimates.
 */
export function spreadEstimator(
  outbreaks: Outbreaks,
  barn: Barn,
  sensitivity: number,
  roundIndex: number,
): (ropes: number) => DetectionEstimate {
  const memo = new Map<number, DetectionEstimate>();
  return (ropes: number): DetectionEstimate => {
    if (ropes === 0) return { p: 0, standardError: 0, realisations: outbreaks.realisations };
    let value = memo.get(ropes);
    if (value === undefined) {
      value = detectionProbability(outbreaks, placeSystematic(barn.pens, { ropes, roundIndex }).penIds, sensitivity);
      memo.set(ropes, value);
    }
    return value;
  };
}

/**
 * The kernels' answers for one site's rounds, each question asked once: a barn asks the same
 * ones (its pens, design, sensitivity, ropes tested) round after round. Answers are numbers or
 * values copied field by field, so no output shares an object with another.
 */
class KernelAnswers {
  private readonly detections = new Map<string, number>();
  private readonly sizes = new Map<string, ReturnType<typeof sampleSize>>();
  private readonly prevalences = new Map<string, PrevalenceEstimate>();

  detection(pens: number, infected: number, sensitivity: number, tested: number): number {
    const key = `${pens}/${infected}/${sensitivity}/${tested}`;
    let value = this.detections.get(key);
    if (value === undefined) {
      value = detectionFor({ pens, infected, sensitivity })(tested);
      this.detections.set(key, value);
    }
    return value;
  }

  sampleSize(pens: number, infected: number, confidence: number, sensitivity: number): ReturnType<typeof sampleSize> {
    const key = `${pens}/${infected}/${confidence}/${sensitivity}`;
    let value = this.sizes.get(key);
    if (value === undefined) {
      value = sampleSize({ pens, infected, confidence, sensitivity });
      this.sizes.set(key, value);
    }
    return value;
  }

  /** Apparent prevalence with its 95% interval and the estimate corrected for the rope's accuracy. */
  prevalence(positive: number, tested: number, sensitivity: number, specificity: number): PrevalenceEstimate {
    const key = `${positive}/${tested}/${sensitivity}/${specificity}`;
    let value = this.prevalences.get(key);
    if (value === undefined) {
      const apparent = apparentPrevalence(positive, tested);
      const corrected = truePrevalence(apparent.estimate, sensitivity, specificity);
      value = {
        apparent: apparent.estimate,
        lower95: apparent.lower,
        upper95: apparent.upper,
        trueEstimate: corrected.estimate,
        clipped: corrected.clipped,
        note: corrected.note,
      };
      this.prevalences.set(key, value);
    }
    return { ...value };
  }
}

function barnConfidence(
  site: Site,
  round: SiteRound,
  barn: Barn,
  assayId: string,
  spread: { sizing: SpreadSizing; roundIndex: number } | undefined,
  answers: KernelAnswers,
): BarnConfidence {
  const program = site.program;
  const barnRound = round.barns.find((candidate) => candidate.barnId === barn.id)!;
  const tally = barnRound.byAssay[assayId]!;
  const pens = barnRound.pensInUse;
  // A rope hung in a pen the layout lists as empty still tested pigs; never count more than N.
  // An empty barn tested no pigs whatever ropes say: it proves nothing this round.
  const tested = barnRound.empty ? 0 : Math.min(pens, tally.testedPens.length);
  const designInfected = designInfectedFor(program, pens);
  const { sensitivity, specificity } = ropeAccuracy(program, assayId, barn);
  const unpooled = answers.detection(pens, designInfected, sensitivity, tested);
  const pooled = pooledConfidence(program, tally, tested, pens, designInfected, sensitivity, unpooled);
  const detectionConfidence = pooled === undefined ? unpooled : pooled.detection;
  const size = answers.sampleSize(pens, designInfected, program.targetConfidence, sensitivity);
  // With the spread model sizing the plans, "ropes needed" is its count, so that the summary and the plan agree.
  const outbreaks =
    spread && spread.sizing.settings.sizingModel === 'spatial'
      ? spread.sizing.outbreaks.outbreaksFor(site, barn, designInfected)
      : null;
  const spreadNeeded = outbreaks
    ? smallestRopesConservative(
        spreadEstimator(outbreaks, barn, sensitivity, spread!.roundIndex),
        program.targetConfidence,
        pens,
      ).ropes
    : undefined;
  const prevalence: PrevalenceEstimate | null =
    tally.positive > 0 && tested > 0
      ? answers.prevalence(Math.min(tally.positive, tested), tested, sensitivity, specificity)
      : null;
  return {
    barnId: barn.id,
    assayId,
    measure: round.measures[assayId] ?? 'ct',
    pens,
    tested,
    designInfected,
    sensitivity,
    specificity,
    detectionConfidence,
    falseAlarm: falseAlarmProbability(tested, specificity),
    ropesNeeded: spreadNeeded === undefined ? size.sampled : spreadNeeded,
    ropesNeededModel: spreadNeeded === undefined ? 'hypergeometric' : 'spatial',
    targetReachable: spreadNeeded === undefined ? size.reachable : spreadNeeded !== null,
    censusConfidence: size.reachable ? null : size.censusConfidence,
    roundsNeededIfUnreachable: size.reachable ? null : size.roundsNeeded,
    positives: tally.positive,
    prevalence,
    status: null,
    group: barnRound.group,
    empty: barnRound.empty,
    freedom: null,
    priorFreedom: null,
    freedomRestart: false,
    ...(pooled === undefined ? {} : { pooled: pooled.report }),
  };
}

/**
 * The pooled detection of a barn's round: the tested pens' ropes fell into the pools the round
 * shows (valid pools only) and the rest were tested one by one, each a pool of one with the
 * rope's sensitivity; exact over the finite barn (`pooledDetectionOfPools`). The pool-level
 * accuracy is the program's (`pooling`), else the rope's own with specificity 1. Undefined when
 * no pen's result is a pool's.
 */
function pooledConfidence(
  program: Program,
  tally: SiteRound['barns'][number]['byAssay'][string],
  tested: number,
  pens: number,
  designInfected: number,
  sensitivity: number,
  unpooled: number,
): { detection: number; report: PooledConfidence } | undefined {
  const valid = (tally.pools ?? []).filter((pool) => pool.poolClass !== 'invalid');
  if (valid.length === 0) return undefined;
  const poolSensitivity = program.pooling?.poolSensitivity ?? sensitivity;
  const poolSpecificity = program.pooling?.poolSpecificity ?? 1;
  // Never count more pens than the barn has in use (a rope in a pen listed as empty, see `tested`).
  let left = tested;
  const pools = valid.map((pool) => {
    const size = Math.min(pool.pens.length, left);
    left -= size;
    return { size, sensitivity: poolSensitivity, specificity: poolSpecificity };
  });
  const pooledPens = tested - left;
  // The other tested pens' ropes were tested on their own: pools of one with the rope's accuracy.
  const singles = left;
  const tests = [
    ...pools.filter((pool) => pool.size > 0),
    ...Array.from({ length: singles }, () => ({ size: 1, sensitivity, specificity: 1 })),
  ];
  const detection = designInfected === 0 ? 0 : pooledDetectionOfPools(pens, designInfected, tests);
  return {
    detection,
    report: {
      pools: valid.filter((pool) => pool.pens.length > 1).length,
      pooledPens,
      positivePools: valid.filter((pool) => pool.poolClass === 'positive').length,
      poolSensitivity,
      poolSpecificity,
      unpooledDetectionConfidence: unpooled,
    },
  };
}

/**
 * Confidence for every round of a site, per barn and assay, and freedom across rounds per assay.
 * A round in which an assay was not tested at all counts as a round of zero sensitivity: the
 * introduction risk still accrues, so a missed or late round lowers confidence. Assays never
 * share a freedom: a positive of one (an antibody assay's above all) resets only its own.
 */
export function siteConfidence(
  site: Site,
  rounds: readonly SiteRound[],
  spread?: SpreadSizing,
  rule: ClearanceRule = negativeRoundsRule(site.program.clearAfterNegativeRounds),
): RoundConfidence[] {
  const statuses = barnStatuses(site, rounds, rule);
  const answers = new KernelAnswers();
  const assays = [...new Set(rounds.flatMap((round) => round.assays))].sort();
  const perRound: RoundConfidence[] = rounds.map((round, index) => ({
    roundNumber: round.number,
    // The plan after round `index` lays its ropes out as round index + 1 (nextRound.ts).
    barns: round.assays.flatMap((assayId) =>
      site.barns.map((barn) => ({
        ...barnConfidence(
          site,
          round,
          barn,
          assayId,
          spread ? { sizing: spread, roundIndex: index + 1 } : undefined,
          answers,
        ),
        status:
          statuses[index]!.barns.find((entry) => entry.barnId === barn.id && entry.assayId === assayId)?.status ?? null,
      })),
    ),
    sites: [],
  }));
  // A round awaiting its results has proved nothing yet, nor failed to: it has no detection
  // figure and stays out of the freedom chain until results come back (or their grace period
  // ends and it counts as a round with missing ropes).
  const counted = rounds
    .map((round, index) => ({ round, index }))
    .filter(({ round }) => round.state !== 'awaiting-results');
  for (const assayId of assays) addSiteFreedom(site, rounds, perRound, counted, statuses, assayId);
  barnFreedom(site, rounds, perRound);
  return perRound;
}
