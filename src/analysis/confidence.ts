/**
 * What each round proved: detection confidence per barn and site at the program's design
 * prevalence, the ropes the target would have needed, prevalence when positives exist, and the
 * probability of freedom across rounds. Pure: the round model and the program come in.
 */
import { perAssayValue } from '../config/load.js';
import type { Barn, Measure, Program, Site } from '../config/types.js';
import type { SiteRound } from '../interpret/roundModel.js';
import { daysBetween } from '../interpret/rounds.js';
import {
  apparentPrevalence,
  designInfectedPens,
  detectionFor,
  falseAlarmProbability,
  freedomAcrossRounds,
  pooledDetectionOfPools,
  freedomEquilibrium,
  sampleSize,
  siteDetection,
  truePrevalence,
} from '../stats/index.js';

export interface BarnConfidence {
  barnId: string;
  assayId: string;
  /** `sp-ratio`: an antibody assay, whose figures are about exposure (see SiteConfidence). */
  measure: Measure;
  /** N: pens in use. */
  pens: number;
  /** n: pens with a valid result for this assay (invalid results prove nothing). */
  tested: number;
  /** d: infected pens at the design prevalence. */
  designInfected: number;
  sensitivity: number;
  specificity: number;
  /** P(at least one positive | infection at the design prevalence), Cameron & Baldock 1998. */
  detectionConfidence: number;
  /** Chance of at least one false positive from an uninfected barn: 1 - Sp^n. */
  falseAlarm: number;
  /** Ropes one round needs to reach the target; null when no single round can. */
  ropesNeeded: number | null;
  targetReachable: boolean;
  /** Best confidence a rope in every pen gives, when the target is unreachable in one round. */
  censusConfidence: number | null;
  roundsNeededIfUnreachable: number | null;
  positives: number;
  prevalence: PrevalenceEstimate | null;
  /**
   * Only when some pens were tested in pools: `detectionConfidence` above is then the pooled
   * figure, and this holds the pools and the figure the same pens would give tested one by one.
   */
  pooled?: PooledConfidence;
}

/** Detection of a round in which some ropes were tested in pools, beside the unpooled figure. */
export interface PooledConfidence {
  /** Pools of two or more of the barn's ropes (a pool of one is a rope tested on its own). */
  pools: number;
  /** Pens whose result is a pool's. */
  pooledPens: number;
  /** Pools that tested positive (their pens are held as suspect and retested one by one). */
  positivePools: number;
  poolSensitivity: number;
  poolSpecificity: number;
  /** The detection confidence if every tested pen had been tested on its own (Cameron & Baldock 1998). */
  unpooledDetectionConfidence: number;
}

export interface PrevalenceEstimate {
  apparent: number;
  lower95: number;
  upper95: number;
  /** Rogan & Gladen 1978, clipped to [0, 1]. */
  trueEstimate: number;
  clipped: boolean;
  note: string | null;
}

/**
 * Detection and freedom of one assay on a site. Each assay keeps its own: an antibody assay
 * (measure sp-ratio) detects exposure (infection or vaccination, weeks back), so a negative
 * antibody round adds to the probability of freedom from exposure and a positive one resets
 * that, never the freedom of a PCR assay, which is about virus present now.
 */
export interface SiteConfidence {
  assayId: string;
  measure: Measure;
  roundNumber: number;
  /** 1 - prod(1 - p_barn): the round's site-level sensitivity (SSe). */
  detectionConfidence: number;
  /** Only when some barn's ropes were pooled: the site figure had every tested pen been tested on its own. */
  unpooledDetectionConfidence?: number;
  positive: boolean;
  positiveBarns: string[];
  /** Days since the previous round started (null for the first round). */
  daysSincePrevious: number | null;
  /** Probability the introduction between the previous round and this one was applied over. */
  introductionApplied: number;
  /** Probability of freedom the round started from. */
  priorFreedom: number;
  /** Probability of freedom after this round (0 after a positive round: reset). */
  freedom: number;
  /** What the next round starts from if nothing else is learned. */
  nextPrior: number;
  /** Where repeated rounds like this one level off. */
  levelsOffAt: number;
  freedomReset: boolean;
}

export interface RoundConfidence {
  roundNumber: number;
  barns: BarnConfidence[];
  sites: SiteConfidence[];
}

export function designInfectedFor(program: Program, pens: number): number {
  return program.designPrevalence.kind === 'pens' ? Math.min(pens, program.designPrevalence.value) : designInfectedPens(program.designPrevalence.value, pens);
}

/** Rope sensitivity and specificity of an assay in a barn (by its age group). */
export function ropeAccuracy(program: Program, assayId: string, barn: Barn): { sensitivity: number; specificity: number } {
  return {
    sensitivity: perAssayValue(program.ropeSensitivity, assayId, barn.ageGroup),
    specificity: perAssayValue(program.ropeSpecificity, assayId, barn.ageGroup),
  };
}

function barnConfidence(site: Site, round: SiteRound, barn: Barn, assayId: string): BarnConfidence {
  const program = site.program;
  const barnRound = round.barns.find((candidate) => candidate.barnId === barn.id)!;
  const tally = barnRound.byAssay[assayId]!;
  const pens = barnRound.pensInUse;
  // A rope hung in a pen the layout lists as empty still tested pigs; never count more than N.
  const tested = Math.min(pens, tally.testedPens.length);
  const designInfected = designInfectedFor(program, pens);
  const { sensitivity, specificity } = ropeAccuracy(program, assayId, barn);
  const unpooled = detectionFor({ pens, infected: designInfected, sensitivity })(tested);
  const pooled = pooledConfidence(program, tally, tested, pens, designInfected, sensitivity, unpooled);
  const detectionConfidence = pooled === undefined ? unpooled : pooled.detection;
  const size = sampleSize({ pens, infected: designInfected, confidence: program.targetConfidence, sensitivity });
  let prevalence: PrevalenceEstimate | null = null;
  if (tally.positive > 0 && tested > 0) {
    const apparent = apparentPrevalence(Math.min(tally.positive, tested), tested);
    const corrected = truePrevalence(apparent.estimate, sensitivity, specificity);
    prevalence = {
      apparent: apparent.estimate,
      lower95: apparent.lower,
      upper95: apparent.upper,
      trueEstimate: corrected.estimate,
      clipped: corrected.clipped,
      note: corrected.note,
    };
  }
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
    ropesNeeded: size.sampled,
    targetReachable: size.reachable,
    censusConfidence: size.reachable ? null : size.censusConfidence,
    roundsNeededIfUnreachable: size.reachable ? null : size.roundsNeeded,
    positives: tally.positive,
    prevalence,
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
  const tests = [...pools.filter((pool) => pool.size > 0), ...Array.from({ length: singles }, () => ({ size: 1, sensitivity, specificity: 1 }))];
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
export function siteConfidence(site: Site, rounds: readonly SiteRound[]): RoundConfidence[] {
  const program = site.program;
  const assays = [...new Set(rounds.flatMap((round) => round.assays))].sort();
  const perRound: RoundConfidence[] = rounds.map((round) => ({
    roundNumber: round.number,
    barns: round.assays.flatMap((assayId) => site.barns.map((barn) => barnConfidence(site, round, barn, assayId))),
    sites: [],
  }));
  for (const assayId of assays) {
    const freedomRounds = rounds.map((round, index) => {
      const barns = perRound[index]!.barns.filter((barn) => barn.assayId === assayId);
      const sensitivity = barns.length === 0 ? 0 : siteDetection(barns.map((barn) => barn.detectionConfidence));
      const pooled = barns.some((barn) => barn.pooled !== undefined);
      const unpooled = pooled ? siteDetection(barns.map((barn) => barn.pooled?.unpooledDetectionConfidence ?? barn.detectionConfidence)) : undefined;
      const previous = rounds[index - 1];
      return {
        sensitivity,
        unpooled,
        // A positive pool says the barn holds infection even though no single pen is named.
        positive: barns.some((barn) => barn.positives > 0 || (barn.pooled?.positivePools ?? 0) > 0),
        positiveBarns: barns.filter((barn) => barn.positives > 0 || (barn.pooled?.positivePools ?? 0) > 0).map((barn) => barn.barnId),
        elapsedDays: previous ? Math.max(0, daysBetween(previous.startOn, round.startOn)) : program.intervalDays,
        daysSincePrevious: previous ? daysBetween(previous.startOn, round.startOn) : null,
      };
    });
    const freedom = freedomAcrossRounds(
      { prior: program.priorFreedom, introduction: program.introductionPerInterval, order: 'update-then-discount', intervalDays: program.intervalDays },
      freedomRounds,
    );
    freedomRounds.forEach((round, index) => {
      const step = freedom.rounds[index]!;
      const previousStep = freedom.rounds[index - 1];
      perRound[index]!.sites.push({
        assayId,
        measure: rounds.find((candidate) => candidate.measures[assayId] !== undefined)?.measures[assayId] ?? 'ct',
        roundNumber: rounds[index]!.number,
        detectionConfidence: round.sensitivity,
        ...(round.unpooled === undefined ? {} : { unpooledDetectionConfidence: round.unpooled }),
        positive: round.positive,
        positiveBarns: round.positiveBarns,
        daysSincePrevious: round.daysSincePrevious,
        introductionApplied: previousStep ? previousStep.introduction : 0,
        priorFreedom: step.prior,
        freedom: step.posterior,
        nextPrior: step.nextPrior,
        levelsOffAt: freedomEquilibrium(round.sensitivity, program.introductionPerInterval).posterior,
        freedomReset: round.positive,
      });
    });
  }
  return perRound;
}
