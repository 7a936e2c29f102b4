/**
 * What each round proved: detection confidence per barn and site at the program's design
 * prevalence, the ropes the target would have needed, prevalence when positives exist, and the
 * probability of freedom across rounds. Pure: the round model and the program come in.
 */
import { perAssayValue } from '../config/load.js';
import type { AnalysisSettings, Barn, Measure, Program, Site } from '../config/types.js';
import { placeSystematic, smallestRopesConservative } from '../plan/index.js';
import { detectionProbability, type DetectionEstimate, type Outbreaks } from '../spatial/index.js';
import type { GroupRef } from '../rounds/pigGroups.js';
import type { SiteRound } from '../rounds/roundModel.js';
import { daysBetween } from '../rounds/rounds.js';
import { negativeRoundsRule, statusOverRounds, type ClearanceRule, type PositiveState } from './barnStatus.js';
import {
  apparentPrevalence,
  designInfectedBarns,
  designInfectedPens,
  detectionFor,
  falseAlarmProbability,
  freedomAcrossRounds,
  pooledDetectionOfPools,
  freedomEquilibrium,
  sampleSize,
  siteDetection,
  truePrevalence,
  twoStageSiteDetection,
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
  /**
   * Ropes one round needs to reach the target, by the model that sizes the next plan
   * (analysis.sizingModel): the hypergeometric count, or the spread model's (estimate less two
   * standard errors, ropes laid out as the round after this one lays them); null when no
   * single round can.
   */
  ropesNeeded: number | null;
  ropesNeededModel: 'hypergeometric' | 'spatial';
  targetReachable: boolean;
  /** Best confidence a rope in every pen gives, when the target is unreachable in one round. */
  censusConfidence: number | null;
  roundsNeededIfUnreachable: number | null;
  positives: number;
  prevalence: PrevalenceEstimate | null;
  /**
   * A PCR assay: whether the barn is positive after this round (and since when) or clear, by the
   * program's clearance rule (src/analysis/barnStatus.ts). Null for an antibody assay.
   */
  status: PositiveState | null;
  /** The group of pigs in the barn this round (null: not run by groups, or empty). */
  group: GroupRef | null;
  /**
   * The barn was empty (between a group's close-out and the next placement): nothing to detect,
   * so the detection figures above are 0 and stand for no figure; not a missed round.
   */
  empty: boolean;
  /**
   * Probability of freedom of this barn and assay, built from this group's rounds only (Martin,
   * Cameron & Greiner 2007): a new group restarts it from the configured prior, since the pigs
   * the earlier rounds tested have left. Null for an empty barn.
   */
  freedom: number | null;
  /** The probability of freedom this barn's round started from (null for an empty barn). */
  priorFreedom: number | null;
  /** This is the first round of a new group: the barn's freedom started again from the prior. */
  freedomRestart: boolean;
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
  /**
   * The round's site-level sensitivity (SSe) at the program's design: with D of the H barns
   * infected (barnDesignPrevalence; every barn without it), 1 - e_D({1 - p_barn}) / C(H, D),
   * which is 1 - prod(1 - p_barn) when D = H. Freedom is built on this figure.
   */
  detectionConfidence: number;
  /** H: the site's barns (a barn without a valid rope counts with p = 0). */
  barns: number;
  /** D behind `detectionConfidence`. */
  infectedBarns: number;
  /** 1 - prod(1 - p_barn): every barn infected at the design prevalence. */
  detectionIfEveryBarn: number;
  /** The barns of the second figure: D when the program sets fewer than H, else 1. */
  fewInfectedBarns: number;
  /** Two-stage site sensitivity with only `fewInfectedBarns` barns infected, at random. */
  detectionIfFewBarns: number;
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
  /**
   * Probability of freedom after this round; null while the site is positive for a PCR assay
   * (`status`): a probability of freedom means nothing for a site known to be infected. An
   * antibody assay keeps a number (0 after a positive round: reset).
   */
  freedom: number | null;
  /** A PCR assay: positive since a round, or clear, by the program's clearance rule. Null for an antibody assay. */
  status: PositiveState | null;
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
  return program.designPrevalence.kind === 'pens'
    ? Math.min(pens, program.designPrevalence.value)
    : designInfectedPens(program.designPrevalence.value, pens);
}

/**
 * D, the barns assumed infected when a site of `barns` barns is judged as a whole: the program's
 * barn-level design value (a proportion rounded up, or a number), or every barn without one.
 */
export function designBarnsFor(program: Program, barns: number): number {
  return program.barnDesignPrevalence === undefined ? barns : designInfectedBarns(program.barnDesignPrevalence, barns);
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

function barnConfidence(
  site: Site,
  round: SiteRound,
  barn: Barn,
  assayId: string,
  spread: { sizing: SpreadSizing; roundIndex: number } | undefined,
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
  const unpooled = detectionFor({ pens, infected: designInfected, sensitivity })(tested);
  const pooled = pooledConfidence(program, tally, tested, pens, designInfected, sensitivity, unpooled);
  const detectionConfidence = pooled === undefined ? unpooled : pooled.detection;
  const size = sampleSize({ pens, infected: designInfected, confidence: program.targetConfidence, sensitivity });
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
 * The site figures of one round from its barns' detection probabilities. Barns of the site that
 * are not among `barnProbabilities` (no rope this round) count with p = 0 (two-stage design:
 * Cameron & Baldock 1998; the same as epiR's rsu.sep.rs2st with an unsampled herd).
 */
export function siteFigures(
  program: Program,
  siteBarns: number,
  barnProbabilities: readonly number[],
): Pick<
  SiteConfidence,
  | 'detectionConfidence'
  | 'barns'
  | 'infectedBarns'
  | 'detectionIfEveryBarn'
  | 'fewInfectedBarns'
  | 'detectionIfFewBarns'
> {
  const barns = Math.max(siteBarns, barnProbabilities.length);
  if (barnProbabilities.length === 0)
    return {
      detectionConfidence: 0,
      barns,
      infectedBarns: barns,
      detectionIfEveryBarn: 0,
      fewInfectedBarns: 1,
      detectionIfFewBarns: 0,
    };
  const probabilities = [...barnProbabilities, ...Array.from({ length: barns - barnProbabilities.length }, () => 0)];
  const infectedBarns = designBarnsFor(program, barns);
  const fewInfectedBarns = infectedBarns < barns ? infectedBarns : 1;
  const detectionIfEveryBarn = siteDetection(probabilities);
  const detectionIfFewBarns = twoStageSiteDetection(probabilities, fewInfectedBarns);
  return {
    detectionConfidence: infectedBarns === barns ? detectionIfEveryBarn : detectionIfFewBarns,
    barns,
    infectedBarns,
    detectionIfEveryBarn,
    fewInfectedBarns,
    detectionIfFewBarns,
  };
}

/**
 * Per barn and assay, the probability of freedom across the rounds of the barn's current group
 * (Martin, Cameron & Greiner 2007, update then discount, introduction scaled to the days
 * between the group's rounds). A round of another group starts a new chain from the configured
 * prior (all-in/all-out: the earlier group's pigs, and what their rounds proved, have left; common
 * practice, no source); a round in which the barn is empty is left out of the chain.
 */
function barnFreedom(site: Site, rounds: readonly SiteRound[], perRound: readonly RoundConfidence[]): void {
  const program = site.program;
  for (const barn of site.barns) {
    const assays = [...new Set(rounds.flatMap((round) => round.assays))];
    for (const assayId of assays) {
      type Link = { entry: BarnConfidence; startOn: string };
      const chains: Link[][] = [];
      let chainKey: string | undefined;
      rounds.forEach((round, index) => {
        const entry = perRound[index]!.barns.find(
          (candidate) => candidate.barnId === barn.id && candidate.assayId === assayId,
        );
        if (entry === undefined || entry.empty || round.state === 'awaiting-results') return;
        const key = entry.group?.id ?? '';
        if (chainKey === undefined || key !== chainKey) {
          chains.push([]);
          chainKey = key;
        }
        chains.at(-1)!.push({ entry, startOn: round.startOn });
      });
      chains.forEach((chain, chainIndex) => {
        const steps = freedomAcrossRounds(
          {
            prior: program.priorFreedom,
            introduction: program.introductionPerInterval,
            order: 'update-then-discount',
            intervalDays: program.intervalDays,
          },
          chain.map((link, index) => ({
            sensitivity: link.entry.detectionConfidence,
            positive: link.entry.positives > 0,
            elapsedDays:
              index === 0 ? program.intervalDays : Math.max(0, daysBetween(chain[index - 1]!.startOn, link.startOn)),
          })),
        ).rounds;
        chain.forEach((link, index) => {
          link.entry.priorFreedom = steps[index]!.prior;
          link.entry.freedom = steps[index]!.posterior;
          // A chain after the first began with a change of group (the first may too, when it is a group).
          link.entry.freedomRestart = index === 0 && (chainIndex > 0 || link.entry.group !== null);
        });
      });
    }
  }
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
  const program = site.program;
  // All-in/all-out: a new group of pigs in a positive barn ends its positive state (the infected
  // pigs have left), whatever the run of negative rounds (common practice, no source).
  const groupOf = (roundIndex: number, barnId: string) =>
    rounds[roundIndex]?.barns.find((barn) => barn.barnId === barnId)?.group?.id ?? null;
  const groupPlaced = (barnId: string, roundNumber: number) => {
    const index = rounds.findIndex((round) => round.number === roundNumber);
    const group = groupOf(index, barnId);
    return group !== null && index > 0 && group !== groupOf(index - 1, barnId);
  };
  const statuses = statusOverRounds({ rounds, barnIds: site.barns.map((barn) => barn.id), rule, groupPlaced });
  const assays = [...new Set(rounds.flatMap((round) => round.assays))].sort();
  const perRound: RoundConfidence[] = rounds.map((round, index) => ({
    roundNumber: round.number,
    // The plan after round `index` lays its ropes out as round index + 1 (nextRound.ts).
    barns: round.assays.flatMap((assayId) =>
      site.barns.map((barn) => ({
        ...barnConfidence(site, round, barn, assayId, spread ? { sizing: spread, roundIndex: index + 1 } : undefined),
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
  for (const assayId of assays) {
    const freedomRounds = counted.map(({ round, index }, position) => {
      // An empty barn has no pigs to find: it adds nothing to the site's detection (not a missed barn),
      // and it cannot be one of the infected barns of the two-stage figure.
      // A positive is never set aside, even from a barn the configuration calls empty.
      const barns = perRound[index]!.barns.filter((barn) => barn.assayId === assayId);
      const stocked = barns.filter((barn) => !barn.empty);
      const siteBarns = site.barns.length - (barns.length - stocked.length);
      const figures = siteFigures(
        program,
        siteBarns,
        stocked.map((barn) => barn.detectionConfidence),
      );
      const sensitivity = figures.detectionConfidence;
      const pooled = stocked.some((barn) => barn.pooled !== undefined);
      const unpooled = pooled
        ? siteFigures(
            program,
            siteBarns,
            stocked.map((barn) => barn.pooled?.unpooledDetectionConfidence ?? barn.detectionConfidence),
          ).detectionConfidence
        : undefined;
      const previous = counted[position - 1]?.round;
      return {
        sensitivity,
        figures,
        unpooled,
        // A positive pool says the barn holds infection even though no single pen is named.
        positive: barns.some((barn) => barn.positives > 0 || (barn.pooled?.positivePools ?? 0) > 0),
        positiveBarns: barns
          .filter((barn) => barn.positives > 0 || (barn.pooled?.positivePools ?? 0) > 0)
          .map((barn) => barn.barnId),
        elapsedDays: previous ? Math.max(0, daysBetween(previous.startOn, round.startOn)) : program.intervalDays,
        daysSincePrevious: previous ? daysBetween(previous.startOn, round.startOn) : null,
      };
    });
    const freedom = freedomAcrossRounds(
      {
        prior: program.priorFreedom,
        introduction: program.introductionPerInterval,
        order: 'update-then-discount',
        intervalDays: program.intervalDays,
      },
      freedomRounds,
    );
    freedomRounds.forEach((round, position) => {
      const step = freedom.rounds[position]!;
      const previousStep = freedom.rounds[position - 1];
      const index = counted[position]!.index;
      const status = statuses[index]!.sites.find((entry) => entry.assayId === assayId)?.status ?? null;
      perRound[index]!.sites.push({
        assayId,
        measure: rounds.find((candidate) => candidate.measures[assayId] !== undefined)?.measures[assayId] ?? 'ct',
        roundNumber: rounds[index]!.number,
        ...round.figures,
        ...(round.unpooled === undefined ? {} : { unpooledDetectionConfidence: round.unpooled }),
        positive: round.positive,
        positiveBarns: round.positiveBarns,
        daysSincePrevious: round.daysSincePrevious,
        introductionApplied: previousStep ? previousStep.introduction : 0,
        priorFreedom: step.prior,
        // The negative rounds that clear a site count as evidence from the prior on (Martin,
        // Cameron & Greiner 2007 restart after a positive round); only the number is withheld
        // while the site is positive.
        freedom: status?.state === 'positive' ? null : step.posterior,
        status,
        nextPrior: step.nextPrior,
        levelsOffAt: freedomEquilibrium(round.sensitivity, program.introductionPerInterval).posterior,
        freedomReset: round.positive,
      });
    });
  }
  barnFreedom(site, rounds, perRound);
  return perRound;
}
