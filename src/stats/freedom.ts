/**
 * Probability of freedom across surveillance rounds (Bayesian updating with introduction risk).
 */
import { requireNumber, requireProbability } from './validate.js';

/**
 * Which comes first within a step:
 * - 'update-then-discount' (textbook; the CLI): round i updates the prior it was given with its
 *   negative result, then the introduction risk until the next round discounts the posterior.
 *   The configured prior is the probability of freedom at the time of the first round.
 * - 'discount-then-update': the configured prior is the probability at the last assessment; the
 *   introduction risk of the interval up to round i is applied first, then round i's result.
 *   With prior 0.5, PI 0.01 and SSe 0.8 this gives prior 0.495 and posterior 0.8305369.
 * Both describe the same chain; they differ only in whether the configured prior is discounted
 * before the first round.
 */
export type FreedomOrder = 'update-then-discount' | 'discount-then-update';

/** One surveillance round. */
export interface FreedomRound {
  /** SSe, detection confidence of the round at the design prevalence, in [0, 1]. */
  sensitivity: number;
  /** True when the round found infection: freedom is reset. Default false. */
  positive?: boolean;
  /**
   * Days since the previous round (for round 0: since the configured prior was assessed).
   * Only used with `intervalDays`; default `intervalDays`.
   */
  elapsedDays?: number;
}

export interface FreedomOptions {
  /** PF, prior probability of freedom, in [0, 1]. */
  prior: number;
  /** PI, probability of introduction per program interval (per round when intervalDays is absent), in [0, 1]. */
  introduction: number;
  order: FreedomOrder;
  /** Length in days of the interval PI is given for; enables elapsed-days scaling. */
  intervalDays?: number;
}

export interface FreedomStep {
  /** PF this round's result updated. */
  prior: number;
  /** PF' after this round: 0 when the round was positive. */
  posterior: number;
  /** PF the next round starts from: posterior (1 - PI), or the restart value after a positive round. */
  nextPrior: number;
  /** PI applied between this round and the next. */
  introduction: number;
  positive: boolean;
}

export interface FreedomResult {
  rounds: FreedomStep[];
  /**
   * Where repeated negative rounds level off with the last round's SSe and the nominal PI,
   * solved analytically (see freedomEquilibrium); null when there are no rounds.
   */
  equilibrium: FreedomEquilibrium | null;
}

export interface FreedomEquilibrium {
  /** PF* at the start of a round (a nextPrior). */
  prior: number;
  /** The posterior a round reaches from PF*. */
  posterior: number;
}

/**
 * Posterior probability of freedom after a negative round:
 * PF' = PF / (1 - SSe (1 - PF)).
 * @param prior PF in [0, 1]. @param sensitivity SSe in [0, 1].
 * @throws RangeError when an argument is not a probability.
 * @see Martin PAJ, Cameron AR, Greiner M 2007, Demonstrating freedom from disease using multiple
 *   complex data sources 1: a new methodology based on scenario trees, Prev Vet Med 79:71-97.
 * @example freedomPosterior(0.495, 0.8) // 0.8305369
 */
export function freedomPosterior(prior: number, sensitivity: number): number {
  requireProbability('prior', prior);
  requireProbability('sensitivity', sensitivity);
  const denominator = 1 - sensitivity * (1 - prior);
  // prior = 0 and SSe = 1 is 0/0: a barn known to be infected stays "not free".
  if (denominator === 0) return 0;
  return Math.min(1, prior / denominator);
}

/**
 * Introduction probability over the days actually elapsed, when PI is given per program interval:
 * PI_elapsed = 1 - (1 - PI)^(days / intervalDays), computed as -expm1((days/interval) log1p(-PI)).
 * A late or missed round (more days) gives a larger PI and so lower confidence.
 * @param introduction PI in [0, 1]. @param elapsedDays days >= 0. @param intervalDays days > 0.
 * @throws RangeError when an argument is out of its domain.
 * @see Martin PAJ, Cameron AR, Greiner M 2007, Prev Vet Med 79:71-97 (constant hazard assumed).
 * @example introductionOver(0.01, 56, 28) // 0.0199
 */
export function introductionOver(introduction: number, elapsedDays: number, intervalDays: number): number {
  requireProbability('introduction', introduction);
  requireNumber('elapsedDays', elapsedDays, 0, Number.MAX_VALUE);
  requireNumber('intervalDays', intervalDays, 0, Number.MAX_VALUE, { openMin: true });
  if (introduction === 1) return elapsedDays > 0 ? 1 : 0;
  return 0 - Math.expm1((elapsedDays / intervalDays) * Math.log1p(-introduction));
}

/**
 * Equilibrium of repeated negative rounds with constant SSe and PI, solved analytically:
 * the fixed point of PF -> (1 - PI) PF / (1 - SSe (1 - PF)) with PF > 0 is
 * PF* = 1 - PI / SSe (the level each round starts from), and the round's posterior there is
 * PF* / (1 - PI) = (1 - PI/SSe) / (1 - PI). When PI >= SSe the only fixed point in [0, 1] is 0
 * (every round loses more to introduction than it gains).
 * @param sensitivity SSe in [0, 1]. @param introduction PI in [0, 1].
 * @throws RangeError when an argument is not a probability.
 * @see Martin PAJ, Cameron AR, Greiner M 2007, Prev Vet Med 79:71-97.
 * @example freedomEquilibrium(0.8, 0.01) // { prior: 0.9875, posterior: 0.997475 }
 */
export function freedomEquilibrium(sensitivity: number, introduction: number): FreedomEquilibrium {
  requireProbability('sensitivity', sensitivity);
  requireProbability('introduction', introduction);
  if (introduction >= sensitivity) return { prior: 0, posterior: 0 };
  const prior = 1 - introduction / sensitivity;
  return { prior, posterior: Math.min(1, prior / (1 - introduction)) };
}

/**
 * Probability of freedom round by round (Martin, Cameron & Greiner 2007): after a negative round
 * PF' = PF / (1 - SSe (1 - PF)); before the next round PF_next = PF' (1 - PI), with PI scaled to
 * the days elapsed when `intervalDays` is given. A positive round sets the posterior to 0 ("not
 * free") and the following negative rounds start again from the configured prior (discounted
 * first under 'discount-then-update', exactly as at the start).
 *
 * @throws RangeError when a probability is outside [0, 1], days are negative, or order is unknown.
 * @see Martin PAJ, Cameron AR, Greiner M 2007, Demonstrating freedom from disease using multiple
 *   complex data sources 1, Prev Vet Med 79:71-97.
 * @example freedomAcrossRounds({ prior: 0.5, introduction: 0.01, order: 'discount-then-update' }, [{ sensitivity: 0.8 }]).rounds[0] // prior 0.495, posterior 0.8305369
 */
export function freedomAcrossRounds(options: FreedomOptions, rounds: readonly FreedomRound[]): FreedomResult {
  const { prior, introduction, order, intervalDays } = options;
  requireProbability('prior', prior);
  requireProbability('introduction', introduction);
  if (order !== 'update-then-discount' && order !== 'discount-then-update') {
    throw new RangeError(
      `\`order\` must be one of [update-then-discount, discount-then-update], got ${JSON.stringify(order)}`,
    );
  }
  if (intervalDays !== undefined) requireNumber('intervalDays', intervalDays, 0, Number.MAX_VALUE, { openMin: true });
  rounds.forEach((round, i) => {
    requireProbability(`rounds[${i}].sensitivity`, round.sensitivity);
    if (round.elapsedDays !== undefined)
      requireNumber(`rounds[${i}].elapsedDays`, round.elapsedDays, 0, Number.MAX_VALUE);
  });

  // PI for the interval that ends at round i (i = rounds.length: the nominal next interval).
  const introductionBefore = (i: number): number => {
    if (intervalDays === undefined) return introduction;
    const days = rounds[i]?.elapsedDays ?? intervalDays;
    return introductionOver(introduction, days, intervalDays);
  };
  // The prior a round starts from when nothing before it counts (start, or after a positive).
  const restart = (i: number): number =>
    order === 'discount-then-update' ? prior * (1 - introductionBefore(i)) : prior;

  const steps: FreedomStep[] = [];
  let current = restart(0);
  for (let i = 0; i < rounds.length; i++) {
    const round = rounds[i]!;
    const positive = round.positive === true;
    const posterior = positive ? 0 : freedomPosterior(current, round.sensitivity);
    const pi = introductionBefore(i + 1);
    const nextPrior = positive ? restart(i + 1) : posterior * (1 - pi);
    steps.push({ prior: current, posterior, nextPrior, introduction: pi, positive });
    current = nextPrior;
  }
  const last = rounds[rounds.length - 1];
  return {
    rounds: steps,
    equilibrium: last === undefined ? null : freedomEquilibrium(last.sensitivity, introduction),
  };
}
