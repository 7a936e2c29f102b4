/**
 * What each round proved, as plain values: the confidence of a barn and of the site per assay.
 * The types apart from the code (confidence.ts), so that readers need not import the statistics.
 */
import type { Measure } from '../config/types.js';
import type { GroupRef } from '../rounds/pigGroups.js';
import type { PositiveState } from './barnStatus.js';

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
