/**
 * Sample size: the fewest ropes that give a round the target detection confidence, and what to
 * say when no single round can.
 */
import { detectionFor, binomialDetection } from './detection.js';
import { requireInteger, requireNumber, requireProbability, TARGET_SLACK } from './validate.js';

/**
 * Design prevalence as pens: d = ceil(p N), at least 1 pen when p > 0.
 * The product is snapped to the nearest integer when within 1e-9 relative of it, so that
 * 0.1 * 30 = 3.0000000000000004 gives 3 pens, not 4.
 *
 * @param prevalence p, proportion of pens, in [0, 1]. @param pens N (integer >= 1).
 * @returns d, an integer in [0, N] (0 only when p = 0).
 * @throws RangeError when an argument is out of its domain.
 * @see Cannon RM, Roe RT 1982, Livestock Disease Surveys: A Field Manual for Veterinarians.
 * @example designInfectedPens(0.1, 30) // 3
 */
export function designInfectedPens(prevalence: number, pens: number): number {
  requireProbability('prevalence', prevalence);
  requireInteger('pens', pens, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  if (prevalence === 0) return 0;
  const product = prevalence * pens;
  const nearest = Math.round(product);
  const pensNeeded = Math.abs(product - nearest) <= 1e-9 * Math.max(1, product) ? nearest : Math.ceil(product);
  return Math.min(pens, Math.max(1, pensNeeded));
}

/**
 * Number of independent rounds k that reach confidence C when one round reaches at most `perRound`:
 * the smallest k with 1 - (1 - perRound)^k >= C, i.e. k = ceil(ln(1-C) / ln(1-perRound)),
 * nudged by one when floating point lands on the wrong side of a whole number. The comparison
 * allows {@link TARGET_SLACK}, so that an exact decimal target such as 0.99 is not missed by
 * rounding (1 - 0.1^2 is 0.9899999999999999 in binary floating point).
 * @returns k >= 1, or null when perRound = 0 (no number of rounds helps) or C = 1 with perRound < 1.
 * @throws RangeError when an argument is not a probability.
 * @see Martin PAJ, Cameron AR, Greiner M 2007, Prev Vet Med 79:71-97 (combining rounds, no introduction).
 * @example roundsToReach(0.95, 0.9) // 2
 */
export function roundsToReach(confidence: number, perRound: number): number | null {
  requireProbability('confidence', confidence);
  requireProbability('perRound', perRound);
  if (confidence === 0) return 0;
  if (perRound === 1) return 1;
  if (perRound === 0 || confidence === 1) return null;
  const reaches = (k: number): boolean => 0 - Math.expm1(k * Math.log1p(-perRound)) >= confidence - TARGET_SLACK;
  let k = Math.max(1, Math.ceil(Math.log1p(-confidence) / Math.log1p(-perRound)));
  while (k > 1 && reaches(k - 1)) k--;
  while (!reaches(k)) k++;
  return k;
}

/** Outcome of a sample-size question. */
export interface SampleSizeResult {
  /** The fewest ropes reaching the target, or null when one round cannot reach it. */
  sampled: number | null;
  reachable: boolean;
  /** Detection confidence with `sampled` ropes (with a census when unreachable). */
  achievedConfidence: number;
  /** Detection confidence of a rope in every pen: 1 - (1-Se)^d; null for an infinite population. */
  censusConfidence: number | null;
  /** Independent rounds that would reach the target when one cannot; null when reachable or never. */
  roundsNeeded: number | null;
  /** d used (finite population); null for an infinite population. */
  infected: number | null;
}

/** A sample-size question; give `infected` or `prevalence` (not both). */
export interface SampleSizeQuestion {
  /** N pens in use (integer >= 1), or Infinity for the binomial (large-population) form. */
  pens: number;
  /** d infected pens at the design prevalence (finite N only). */
  infected?: number;
  /** p design prevalence as a proportion of pens; converted by designInfectedPens when N is finite. */
  prevalence?: number;
  /** C target detection confidence in [0, 1] ([0, 1) for an infinite population). */
  confidence: number;
  /** Se rope sensitivity in [0, 1]; default 1. */
  sensitivity?: number;
}

/**
 * Smallest number of ropes n with P(detect) >= C.
 * Finite N: binary search on the exact detection probability (hypergeometric, or Cameron &
 * Baldock with Se < 1), valid because P(detect) never decreases with n; the result is minimal by
 * the same function the rest of ropewatch reports (n - 1 misses the target). When even a census
 * falls short (the ceiling 1 - (1-Se)^d < C, e.g. Se < C with d = 1), returns sampled null,
 * the census confidence, and the number of independent rounds that would reach C.
 * Infinite N: n = ceil(ln(1-C) / ln(1 - p Se)), checked against 1 - (1 - p Se)^n and nudged by
 * one when rounding lands a whole number on the wrong side.
 *
 * @throws RangeError on a bad argument, both or neither of infected/prevalence, a zero design
 *   prevalence, or C = 1 with an infinite population.
 * @see Cameron AR, Baldock FC 1998, Prev Vet Med 34:1-17; Cannon RM, Roe RT 1982, Livestock
 *   Disease Surveys: A Field Manual for Veterinarians; MacDiarmid SC 1988 (an approximate formula; this search is exact).
 * @example sampleSize({ pens: 100, infected: 5, confidence: 0.95 }).sampled // 45
 */
export function sampleSize(question: SampleSizeQuestion): SampleSizeResult {
  const { pens, confidence } = question;
  const sensitivity = question.sensitivity ?? 1;
  requireProbability('confidence', confidence);
  requireProbability('sensitivity', sensitivity);
  if ((question.infected === undefined) === (question.prevalence === undefined)) {
    throw new RangeError(
      '`infected` or `prevalence` must be given (exactly one), got ' +
        (question.infected === undefined ? 'neither' : 'both'),
    );
  }
  if (pens === Infinity) {
    if (question.prevalence === undefined) {
      throw new RangeError('`prevalence` must be given for an infinite population, got `infected`');
    }
    requireNumber('confidence', confidence, 0, 1, { openMax: true });
    return sampleSizeInfinite(question.prevalence, confidence, sensitivity);
  }
  requireInteger('pens', pens, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53) or Infinity');
  const infected = question.infected ?? designInfectedPens(question.prevalence!, pens);
  requireInteger('infected', infected, 1, pens, '[1, pens]');
  return sampleSizeFinite(pens, infected, confidence, sensitivity);
}

function sampleSizeFinite(pens: number, infected: number, confidence: number, sensitivity: number): SampleSizeResult {
  const detect = detectionFor({ pens, infected, sensitivity });
  const census = detect(pens);
  if (census < confidence) {
    return {
      sampled: null,
      reachable: false,
      achievedConfidence: census,
      censusConfidence: census,
      roundsNeeded: roundsToReach(confidence, census),
      infected,
    };
  }
  // Invariant: detect(low) < C <= detect(high).
  let low = -1;
  let high = pens;
  while (high - low > 1) {
    const mid = Math.floor((low + high) / 2);
    if (detect(mid) >= confidence) high = mid;
    else low = mid;
  }
  return {
    sampled: high,
    reachable: true,
    achievedConfidence: detect(high),
    censusConfidence: census,
    roundsNeeded: null,
    infected,
  };
}

function sampleSizeInfinite(prevalence: number, confidence: number, sensitivity: number): SampleSizeResult {
  requireNumber('prevalence', prevalence, 0, 1, { openMin: true });
  const pSe = prevalence * sensitivity;
  if (pSe === 0) {
    // Se = 0: no ropes ever detect; repeated rounds do not help either.
    return {
      sampled: confidence === 0 ? 0 : null,
      reachable: confidence === 0,
      achievedConfidence: 0,
      censusConfidence: null,
      roundsNeeded: null,
      infected: null,
    };
  }
  const reaches = (n: number): boolean => binomialDetection(prevalence, n, sensitivity) >= confidence;
  let n = pSe === 1 ? 1 : Math.max(0, Math.ceil(Math.log1p(-confidence) / Math.log1p(-pSe)));
  if (confidence === 0) n = 0;
  while (n > 0 && reaches(n - 1)) n--;
  while (!reaches(n)) n++;
  return {
    sampled: n,
    reachable: true,
    achievedConfidence: binomialDetection(prevalence, n, sensitivity),
    censusConfidence: null,
    roundsNeeded: null,
    infected: null,
  };
}
