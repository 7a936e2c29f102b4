/**
 * Detection confidence (herd / barn sensitivity) of one round of ropes: the probability that
 * at least one rope tests positive if `infected` of the `pens` are infected.
 */
import { logHypergeometricPmf, logHypergeometricZero } from './special.js';
import { requireInteger, requireProbability } from './validate.js';

/** Up to this many factors, the miss probability is a direct log1p sum (exact, and fast). */
const DIRECT_TERMS = 8;

/** Relative size below which the rest of a hypergeometric tail is dropped. */
const TAIL_EPSILON = 1e-17;

/** 1 - exp(logMiss) as -expm1(logMiss), clamped against a rounding step past 0 or 1. */
function fromLogMiss(logMiss: number): number {
  const p = 0 - Math.expm1(logMiss);
  return p < 0 ? 0 : p > 1 ? 1 : p;
}

function checkPens(pens: number): void {
  requireInteger('pens', pens, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
}

/**
 * Log of the probability that a perfect test misses: ln[C(N-d, n) / C(N, n)].
 * No checks (callers validate). Uses the symmetry C(N-d,n)/C(N,n) = C(N-n,d)/C(N,d), so the
 * direct product has min(n, d) factors; beyond DIRECT_TERMS it switches to balanced Stirling sums.
 */
function logMissPerfect(pens: number, sampled: number, infected: number): number {
  if (sampled === 0 || infected === 0) return 0;
  if (sampled + infected > pens) return -Infinity;
  const few = Math.min(sampled, infected);
  const many = Math.max(sampled, infected);
  if (few <= DIRECT_TERMS) {
    // ln prod_{i<few} (N - many - i)/(N - i) = sum log1p(-many/(N - i)); log1p keeps tiny
    // detection probabilities (one rope in 100,000 pens) to full relative precision.
    let logMiss = 0;
    for (let i = 0; i < few; i++) logMiss += Math.log1p(-many / (pens - i));
    return logMiss;
  }
  return logHypergeometricZero(pens, infected, sampled);
}

/**
 * Log of the miss probability with an imperfect rope, ln E[q^X], X ~ Hyp(N, d, n), q = 1 - Se.
 * Sums the terms w(x) = Hyp(x) q^x outward from their largest one, scaled to it, so that neither
 * underflow nor the long flat tails of a 100,000-pen barn cost digits or time. w is log-concave
 * (a hypergeometric pmf times a geometric), so the ratio w(x+1)/w(x) falls monotonically and a
 * tail is bounded by t r / (1 - r): the sum stops when that bound is below TAIL_EPSILON of it.
 */
function logMissImperfect(pens: number, sampled: number, infected: number, logQ: number, q: number): number {
  const low = Math.max(0, sampled + infected - pens);
  const high = Math.min(sampled, infected);
  const rest = pens - infected - sampled; // may be negative when low > 0
  // ratio(x) = w(x+1)/w(x)
  const ratio = (x: number): number => (q * (infected - x) * (sampled - x)) / ((x + 1) * (rest + x + 1));
  // Largest term: where ratio crosses 1, from (1-q)x^2 + [q(d+n) + M + 2]x - [q d n - (M + 1)] = 0.
  const a = 1 - q;
  const b = q * (infected + sampled) + rest + 2;
  const c = -(q * infected * sampled - (rest + 1));
  let mode: number;
  const disc = b * b - 4 * a * c;
  if (a > 1e-8 && disc >= 0) {
    mode = Math.ceil((-b + Math.sqrt(disc)) / (2 * a));
  } else {
    mode = Math.floor(((sampled + 1) * (infected + 1)) / (pens + 2));
  }
  if (!Number.isFinite(mode)) mode = low;
  mode = Math.min(high, Math.max(low, mode));
  while (mode < high && ratio(mode) >= 1) mode++;
  while (mode > low && ratio(mode - 1) < 1) mode--;

  let sum = 1;
  let term = 1;
  for (let x = mode; x < high; x++) {
    const r = ratio(x);
    term *= r;
    sum += term;
    if (r < 1 && (term * r) / (1 - r) < TAIL_EPSILON * sum) break;
  }
  term = 1;
  for (let x = mode; x > low; x--) {
    const r = 1 / ratio(x - 1); // w(x-1)/w(x)
    term *= r;
    sum += term;
    if (r < 1 && (term * r) / (1 - r) < TAIL_EPSILON * sum) break;
  }
  return logHypergeometricPmf(mode, pens, infected, sampled) + mode * logQ + Math.log(sum);
}

/**
 * P(detect) = sum_{x >= 1} Hyp(x) [1 - q^x], summed outward from the hypergeometric mode with the
 * same geometric tail bound (the weights 1 - q^x only shrink the terms below the mode and are at
 * most 1 above it, so the hypergeometric ratio bounds both tails). Positive terms only: relative
 * precision holds for the smallest probabilities.
 */
function detectionBySum(pens: number, sampled: number, infected: number, logQ: number): number {
  const low = Math.max(1, sampled + infected - pens);
  const high = Math.min(sampled, infected);
  if (low > high) return 0;
  const rest = pens - infected - sampled;
  const ratio = (x: number): number => ((infected - x) * (sampled - x)) / ((x + 1) * (rest + x + 1));
  let mode = Math.floor(((sampled + 1) * (infected + 1)) / (pens + 2));
  mode = Math.min(high, Math.max(low, mode));
  const weight = (x: number): number => 0 - Math.expm1(x * logQ);
  const logAnchor = logHypergeometricPmf(mode, pens, infected, sampled);
  let sum = weight(mode);
  let hyp = 1;
  for (let x = mode; x < high; x++) {
    const r = ratio(x);
    hyp *= r;
    sum += hyp * weight(x + 1);
    if (r < 1 && (hyp * r) / (1 - r) < TAIL_EPSILON * sum) break;
  }
  hyp = 1;
  for (let x = mode; x > low; x--) {
    const r = 1 / ratio(x - 1);
    hyp *= r;
    sum += hyp * weight(x - 1);
    if (r < 1 && (hyp * r) / (1 - r) < TAIL_EPSILON * sum) break;
  }
  return Math.exp(logAnchor) * sum;
}

/**
 * Detection probability of one round, perfect test, finite barn (hypergeometric sampling):
 * P(detect) = 1 - C(N-d, n) / C(N, n), computed as -expm1(logMiss) rather than 1 - exp(logMiss),
 * which loses every digit when the miss probability is near 1.
 *
 * @param pens N, pens in use (integer >= 1).
 * @param sampled n, ropes, one per distinct pen (integer in [0, N]).
 * @param infected d, infected pens (integer in [0, N]).
 * @returns probability in [0, 1].
 * @throws RangeError when an argument is out of its domain.
 * @see Cannon RM, Roe RT 1982, Livestock Disease Surveys: A Field Manual for Veterinarians.
 * @example hypergeometricDetection(36, 6, 1) // 1/6
 */
export function hypergeometricDetection(pens: number, sampled: number, infected: number): number {
  checkPens(pens);
  requireInteger('sampled', sampled, 0, pens, '[0, pens]');
  requireInteger('infected', infected, 0, pens, '[0, pens]');
  return fromLogMiss(logMissPerfect(pens, sampled, infected));
}

/** The parts of an imperfect-test detection question that stay fixed in a hot loop. */
export interface DetectionSetting {
  /** N, pens in use (integer >= 1). */
  pens: number;
  /** d, infected pens at the design prevalence (integer in [0, N]). */
  infected: number;
  /** Se, probability that the rope of an infected pen tests positive, in [0, 1]; default 1. */
  sensitivity?: number;
}

/**
 * Factory for the imperfect-rope detection probability (Cameron & Baldock 1998, exact form):
 * P(detect) = sum_x Hyp(x; N, d, n) [1 - (1-Se)^x] = 1 - E[(1-Se)^X], X ~ Hyp(N, d, n),
 * computed as -expm1(ln E[(1-Se)^X]). Validates pens, infected and Se once and returns
 * `(sampled) => probability`, for sample-size searches and benchmarks.
 *
 * @throws RangeError on a bad setting; the returned function throws when `sampled` is not an
 *   integer in [0, pens].
 * @see Cameron AR, Baldock FC 1998, A new probability formula for surveys to substantiate freedom
 *   from disease, Prev Vet Med 34:1-17.
 * @example detectionFor({ pens: 36, infected: 9, sensitivity: 0.9 })(6) // 0.807354
 */
export function detectionFor(setting: DetectionSetting): (sampled: number) => number {
  const { pens, infected } = setting;
  const sensitivity = setting.sensitivity ?? 1;
  checkPens(pens);
  requireInteger('infected', infected, 0, pens, '[0, pens]');
  requireProbability('sensitivity', sensitivity);
  const q = 1 - sensitivity;
  const logQ = Math.log1p(-sensitivity);
  const check = (sampled: number): void => {
    if (!Number.isInteger(sampled) || sampled < 0 || sampled > pens)
      requireInteger('sampled', sampled, 0, pens, '[0, pens]');
  };
  if (sensitivity === 0 || infected === 0) {
    return (sampled) => {
      check(sampled);
      return 0;
    };
  }
  if (sensitivity === 1) {
    return (sampled) => {
      check(sampled);
      return fromLogMiss(logMissPerfect(pens, sampled, infected));
    };
  }
  return (sampled) => {
    check(sampled);
    if (sampled === 0) return 0;
    const viaComplement = fromLogMiss(logMissImperfect(pens, sampled, infected, logQ, q));
    // The complement's absolute error (~1e-16) is a large relative error for a small probability;
    // below 1/2 the sum of positive terms keeps the relative precision instead.
    if (viaComplement < 0.5) return Math.min(1, detectionBySum(pens, sampled, infected, logQ));
    return viaComplement;
  };
}

/**
 * Detection probability with an imperfect rope, one call (see detectionFor).
 * @param pens N (integer >= 1); @param sampled n in [0, N]; @param infected d in [0, N];
 * @param sensitivity Se in [0, 1].
 * @throws RangeError when an argument is out of its domain.
 * @see Cameron AR, Baldock FC 1998, Prev Vet Med 34:1-17.
 * @example imperfectDetection(36, 6, 1, 0.9) // 0.15 (= n Se / N when d = 1)
 */
export function imperfectDetection(pens: number, sampled: number, infected: number, sensitivity: number): number {
  return detectionFor({ pens, infected, sensitivity })(sampled);
}

/**
 * Detection probability in a large (infinite) population, binomial form:
 * P(detect) = 1 - (1 - p Se)^n, computed as -expm1(n log1p(-p Se)).
 *
 * @param prevalence p, design prevalence as a proportion of pens, in [0, 1].
 * @param sampled n, ropes (integer >= 0).
 * @param sensitivity Se in [0, 1]; default 1.
 * @throws RangeError when an argument is out of its domain.
 * @see Cannon RM, Roe RT 1982, Livestock Disease Surveys: A Field Manual for Veterinarians.
 * @example binomialDetection(0.05, 59) // 0.9515 (>= 0.95; 58 gives 0.9489)
 */
export function binomialDetection(prevalence: number, sampled: number, sensitivity = 1): number {
  requireProbability('prevalence', prevalence);
  requireInteger('sampled', sampled, 0, Number.MAX_SAFE_INTEGER, '[0, 2^53)');
  requireProbability('sensitivity', sensitivity);
  const pSe = prevalence * sensitivity;
  if (pSe === 1) return sampled > 0 ? 1 : 0;
  return 0 - Math.expm1(sampled * Math.log1p(-pSe));
}

/**
 * False-alarm probability: the chance that an uninfected barn gives at least one positive rope,
 * 1 - Sp^n, computed as -expm1(n log1p(-(1 - Sp))). Reported beside detection, not mixed into it.
 *
 * @param sampled n, ropes (integer >= 0). @param specificity Sp in [0, 1].
 * @throws RangeError when an argument is out of its domain.
 * @see Cameron AR, Baldock FC 1998, Prev Vet Med 34:1-17.
 * @example falseAlarmProbability(10, 0.99) // 0.0956179
 */
export function falseAlarmProbability(sampled: number, specificity: number): number {
  requireInteger('sampled', sampled, 0, Number.MAX_SAFE_INTEGER, '[0, 2^53)');
  requireProbability('specificity', specificity);
  if (specificity === 0) return sampled > 0 ? 1 : 0;
  return 0 - Math.expm1(sampled * Math.log(specificity));
}
