/**
 * Prevalence among sampled pens: apparent (with an exact interval) and true (corrected for the
 * rope's sensitivity and specificity).
 */
import { betaQuantile } from './betaQuantile.js';
import { requireInteger, requireNumber, requireProbability } from './validate.js';

export interface ApparentPrevalence {
  positive: number;
  sampled: number;
  /** positive / sampled. */
  estimate: number;
  lower: number;
  upper: number;
  /** Two-sided confidence level of [lower, upper]. */
  level: number;
}

/**
 * Apparent prevalence x/n with the exact (Clopper-Pearson) interval:
 * lower = BetaQuantile(alpha/2; x, n - x + 1) (0 when x = 0),
 * upper = BetaQuantile(1 - alpha/2; x + 1, n - x) (1 when x = n), alpha = 1 - level.
 *
 * @param positive x, positive ropes (integer in [0, n]). @param sampled n, ropes (integer >= 1).
 * @param level two-sided confidence in (0, 1); default 0.95.
 * @throws RangeError when an argument is out of its domain.
 * @see Clopper CJ, Pearson ES 1934, The use of confidence or fiducial limits illustrated in the case
 *   of the binomial, Biometrika 26:404-413.
 * @example apparentPrevalence(0, 10) // upper 0.308497 (= 1 - 0.025^(1/10))
 */
export function apparentPrevalence(positive: number, sampled: number, level = 0.95): ApparentPrevalence {
  requireInteger('sampled', sampled, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  requireInteger('positive', positive, 0, sampled, '[0, sampled]');
  requireNumber('level', level, 0, 1, { openMin: true, openMax: true });
  const alpha = 1 - level;
  const lower = positive === 0 ? 0 : betaQuantile(alpha / 2, positive, sampled - positive + 1);
  const upper = positive === sampled ? 1 : betaQuantile(1 - alpha / 2, positive + 1, sampled - positive);
  return { positive, sampled, estimate: positive / sampled, lower, upper, level };
}

export interface TruePrevalence {
  /** Rogan-Gladen estimate clipped to [0, 1]. */
  estimate: number;
  /** The unclipped value, which may lie outside [0, 1]. */
  raw: number;
  clipped: boolean;
  /** Why the estimate was clipped; null when it was not. */
  note: string | null;
}

/**
 * True prevalence from apparent prevalence (Rogan & Gladen 1978):
 * TP = (AP + Sp - 1) / (Se + Sp - 1), clipped to [0, 1] with a note. An AP below the false-positive
 * rate 1 - Sp gives TP < 0; an AP above Se gives TP > 1; both mean the data disagree with the
 * assumed Se and Sp (or are few).
 *
 * @param apparent AP in [0, 1]. @param sensitivity Se in [0, 1]. @param specificity Sp in [0, 1].
 * @throws RangeError when an argument is not a probability, or Se + Sp <= 1 (the test carries no
 *   information and the correction divides by zero or flips sign).
 * @see Rogan WJ, Gladen B 1978, Estimating prevalence from the results of a screening test,
 *   Am J Epidemiol 107:71-76.
 * @example truePrevalence(0.2, 0.9, 0.95).estimate // 0.176471 (= 0.15 / 0.85)
 */
export function truePrevalence(apparent: number, sensitivity: number, specificity: number): TruePrevalence {
  requireProbability('apparent', apparent);
  requireProbability('sensitivity', sensitivity);
  requireProbability('specificity', specificity);
  const informative = sensitivity + specificity - 1;
  if (!(informative > 0)) {
    throw new RangeError(`\`sensitivity + specificity\` must be a number in (1, 2], got ${sensitivity + specificity}`);
  }
  const raw = (apparent + specificity - 1) / informative;
  if (raw < 0) {
    return {
      estimate: 0,
      raw,
      clipped: true,
      note: `clipped to 0: apparent prevalence ${apparent} is below the false-positive rate 1 - Sp = ${1 - specificity}`,
    };
  }
  if (raw > 1) {
    return {
      estimate: 1,
      raw,
      clipped: true,
      note: `clipped to 1: apparent prevalence ${apparent} is above the sensitivity ${sensitivity}`,
    };
  }
  return { estimate: raw, raw, clipped: false, note: null };
}
