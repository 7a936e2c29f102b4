/**
 * Sampling schedules compared: the same ropes per month spent as fewer ropes more often or more
 * ropes less often. Under a static prevalence the cumulative detection is the same; the gain of
 * sampling often is timeliness while an infection grows (common practice, no source).
 */
import type { Rng } from '../util/random.js';
import { requireInteger, requireNumber, requireReturnedProbability } from '../stats/validate.js';

/**
 * Expected delay to detection with rounds every D days and per-round detection p, for an
 * introduction at a uniform random time: E[delay] = D (1/p - 1/2). The wait to the first round
 * is uniform on (0, D), mean D/2; each further round is reached with probability 1 - p, adding a
 * geometric (1/p - 1) intervals on average.
 * @param intervalDays D > 0 (days, or any time unit; the result is in the same unit)
 * @param perRound p in (0, 1]
 * @throws RangeError for D <= 0 or p outside (0, 1]
 * Derived by hand: an introduction at a uniform time within a round interval, then a geometric
 * number of rounds to the first detection (no published source; D = 1 week, p = 0.246429 gives 3.5580 weeks).
 * @example expectedDelay(7, 0.5) === 10.5
 */
export function expectedDelay(intervalDays: number, perRound: number): number {
  requireNumber('intervalDays', intervalDays, 0, Infinity, { openMin: true, range: '(0, infinity)' });
  requireNumber('perRound', perRound, 0, 1, { openMin: true });
  return intervalDays * (1 / perRound - 0.5);
}

export type ScheduleLabel = 'current' | 'half the ropes, twice as often' | 'twice the ropes, half as often';

export interface ScheduleOption {
  label: ScheduleLabel;
  ropes: number;
  intervalDays: number;
  /** Ropes per 30 days: ropes * 30 / intervalDays. */
  ropesPer30Days: number;
  perRoundDetection: number;
  /** D (1/p - 1/2); null when p = 0 (never detected). */
  expectedDelayDays: number | null;
}

/** A note on the schedule comparison, coded (src/report/barnPlanNotes.ts words it). */
export type ScheduleNote =
  /** An odd rope count: the more-often schedule rounds up to `halved`. */
  | { kind: 'odd-halving'; ropes: number; halved: number }
  /** Twice the ropes exceeds the pens in use: the less-often schedule is capped. */
  | { kind: 'doubling-capped'; ropes: number; maxRopes: number }
  /** A schedule whose rounds detect nothing at this prevalence. */
  | { kind: 'never-detects'; label: ScheduleLabel }
  /** The growing comparison: per-round figures at the introduced prevalence, the simulated delay grows. */
  | { kind: 'introduced-prevalence' }
  /** The growing comparison's doubling time, a modelling assumption. */
  | { kind: 'growth-doubling'; days: number };

export interface ScheduleInput {
  /** Ropes per round now, integer in [1, maxRopes]. */
  ropes: number;
  /** Days between rounds now, > 0. */
  intervalDays: number;
  /** Ropes available per round (in-use pens). */
  maxRopes: number;
  /** Per-round detection with n ropes (static prevalence). */
  detect: (ropes: number) => number;
}

/** The three schedules with the same ropes per month (ceil(n/2) when n is odd; 2n capped at maxRopes). */
function scheduleShapes(input: ScheduleInput): { label: ScheduleLabel; ropes: number; intervalDays: number }[] {
  return [
    { label: 'current', ropes: input.ropes, intervalDays: input.intervalDays },
    {
      label: 'half the ropes, twice as often',
      ropes: Math.ceil(input.ropes / 2),
      intervalDays: input.intervalDays / 2,
    },
    {
      label: 'twice the ropes, half as often',
      ropes: Math.min(2 * input.ropes, input.maxRopes),
      intervalDays: 2 * input.intervalDays,
    },
  ];
}

function validateSchedule(input: ScheduleInput): void {
  requireInteger('maxRopes', input.maxRopes, 1, Number.MAX_SAFE_INTEGER, '[1, infinity)');
  requireInteger('ropes', input.ropes, 1, input.maxRopes, '[1, maxRopes]');
  requireNumber('intervalDays', input.intervalDays, 0, Infinity, { openMin: true, range: '(0, infinity)' });
}

function scheduleNotes(input: ScheduleInput, options: ScheduleOption[]): ScheduleNote[] {
  const notes: ScheduleNote[] = [];
  if (input.ropes % 2 === 1)
    notes.push({ kind: 'odd-halving', ropes: input.ropes, halved: Math.ceil(input.ropes / 2) });
  if (2 * input.ropes > input.maxRopes)
    notes.push({ kind: 'doubling-capped', ropes: input.ropes, maxRopes: input.maxRopes });
  for (const o of options) if (o.expectedDelayDays === null) notes.push({ kind: 'never-detects', label: o.label });
  return notes;
}

/**
 * Compares the current schedule (n ropes every D days) with n/2 every D/2 and 2n every 2D:
 * per-round detection and expected time to detection D (1/p - 1/2) under a static prevalence.
 * @throws RangeError for ropes outside [1, maxRopes], D <= 0, or detect outside [0, 1]
 * Expected delay as above (derived by hand; no published source).
 */
export function compareSchedules(input: ScheduleInput): { options: ScheduleOption[]; notes: ScheduleNote[] } {
  validateSchedule(input);
  const options = scheduleShapes(input).map((shape) => {
    const p = requireReturnedProbability('detect', input.detect(shape.ropes));
    return {
      ...shape,
      ropesPer30Days: (shape.ropes * 30) / shape.intervalDays,
      perRoundDetection: p,
      expectedDelayDays: p > 0 ? expectedDelay(shape.intervalDays, p) : null,
    };
  });
  return { options, notes: scheduleNotes(input, options) };
}

export interface GrowthModel {
  /** Infected pens at introduction, integer >= 1. */
  initialInfected: number;
  /** Days for the number of infected pens to double, > 0 (Infinity for a static prevalence). */
  doublingDays: number;
  /** In-use pens: the number infected never exceeds it. */
  maxInfected: number;
  /** Per-round detection with `ropes` ropes when `infectedPens` pens are infected. */
  detectAt: (ropes: number, infectedPens: number) => number;
}

export interface SimulatedDelay {
  replicates: number;
  /** Mean days from introduction to the detecting round, over detected replicates; null if none. */
  meanDays: number | null;
  /** Standard error of the mean, s / sqrt(m); null with fewer than 2 detected replicates. */
  standardError: number | null;
  /** Replicates still undetected after `maxRounds` rounds (the mean is then conditional). */
  censored: number;
}

/** Infected pens a days after introduction: min(N, floor(d0 2^(a/T))), at least d0. */
export function infectedAfter(model: GrowthModel, days: number): number {
  const grown = Number.isFinite(model.doublingDays)
    ? Math.floor(model.initialInfected * 2 ** (days / model.doublingDays))
    : model.initialInfected;
  return Math.min(model.maxInfected, Math.max(model.initialInfected, grown));
}

/**
 * Margin, in doublings, around each count's threshold exponent log2(c / d0) beyond which the
 * floating-point d0 2^(a/T) is surely on one side of c: the rounding of the power, the product
 * and the logarithm is about 1e-15 relative, far inside it.
 */
const THRESHOLD_MARGIN = 1e-9;

/**
 * For each count c in (d0, N], the exponent log2(c / d0) at which floor(d0 2^(a/T)) reaches c:
 * infectedAfter's floor of a power becomes a comparison of a/T with these, and the power is
 * computed only for an exponent within THRESHOLD_MARGIN of one (which it then decides exactly).
 */
function growthThresholds(model: GrowthModel): { surelyAtLeast: Float64Array; surelyBelow: Float64Array } {
  const surelyAtLeast = new Float64Array(model.maxInfected + 1);
  const surelyBelow = new Float64Array(model.maxInfected + 1);
  for (let c = model.initialInfected + 1; c <= model.maxInfected; c++) {
    const exponent = Math.log2(c / model.initialInfected);
    surelyAtLeast[c] = exponent + THRESHOLD_MARGIN;
    surelyBelow[c] = exponent - THRESHOLD_MARGIN;
  }
  return { surelyAtLeast, surelyBelow };
}

function validateGrowth(model: GrowthModel): void {
  requireInteger('maxInfected', model.maxInfected, 1, Number.MAX_SAFE_INTEGER, '[1, infinity)');
  requireInteger('initialInfected', model.initialInfected, 1, model.maxInfected, '[1, maxInfected]');
  requireNumber('doublingDays', model.doublingDays, 0, Infinity, { openMin: true, range: '(0, infinity]' });
}

/**
 * Expected days to detection while infection grows, by Monte Carlo: the introduction falls at a
 * uniform time within a round interval; infected pens double every T days (deterministic growth,
 * capped at the in-use pens); each round detects with detectAt(ropes, infected) drawn with `rng`.
 * With T = Infinity the mean converges to D (1/p - 1/2).
 * @param rng seeded uniform generator on [0, 1) (the caller records the seed)
 * @param replicates integer in [1, 10^7]; @param maxRounds rounds before a replicate is censored
 * @throws RangeError for bad schedule or growth parameters, or detectAt outside [0, 1]
 * @see Martin, Cameron & Greiner (2007) Prev Vet Med 79:71-97 (freedom); the expected delay is derived by hand.
 */
export function simulateDelay(
  schedule: { ropes: number; intervalDays: number },
  model: GrowthModel,
  options: { replicates: number; rng: Rng; maxRounds?: number },
): SimulatedDelay {
  validateGrowth(model);
  requireInteger('ropes', schedule.ropes, 0, model.maxInfected, '[0, maxInfected]');
  requireNumber('intervalDays', schedule.intervalDays, 0, Infinity, { openMin: true, range: '(0, infinity)' });
  requireInteger('replicates', options.replicates, 1, 1e7);
  const maxRounds = options.maxRounds ?? 10_000;
  requireInteger('maxRounds', maxRounds, 1, Number.MAX_SAFE_INTEGER, '[1, infinity)');
  // Per-round detection by infected pens (an integer in [initialInfected, maxInfected]), asked of
  // detectAt once per count: a typed array, since the replicate loop reads it every round.
  const known = new Float64Array(model.maxInfected + 1).fill(Number.NaN);
  const detect = (infected: number) => {
    let p = known[infected]!;
    if (Number.isNaN(p)) {
      p = requireReturnedProbability('detectAt', model.detectAt(schedule.ropes, infected));
      known[infected] = p;
    }
    return p;
  };
  const { surelyAtLeast, surelyBelow } = growthThresholds(model);
  const { rng, replicates } = options;
  const { intervalDays } = schedule;
  const { doublingDays, maxInfected: most } = model;
  let sum = 0;
  let sumSq = 0;
  let detected = 0;
  for (let rep = 0; rep < replicates; rep++) {
    const firstRound = rng() * intervalDays; // days from introduction to the next round
    // The highest count whose threshold this replicate's exponent has surely passed: the days
    // only grow, so it only moves up, and once it is every pen no power is computed again.
    let reached = model.initialInfected;
    for (let round = 0; round < maxRounds; round++) {
      const days = firstRound + round * intervalDays;
      const exponent = days / doublingDays;
      while (reached < most && exponent >= surelyAtLeast[reached + 1]!) reached++;
      const infected = reached === most || exponent <= surelyBelow[reached + 1]! ? reached : infectedAfter(model, days);
      if (rng() < detect(infected)) {
        sum += days;
        sumSq += days * days;
        detected++;
        break;
      }
    }
  }
  const meanDays = detected > 0 ? sum / detected : null;
  const variance = detected > 1 ? Math.max(0, (sumSq - (sum * sum) / detected) / (detected - 1)) : null;
  return {
    replicates: options.replicates,
    meanDays,
    standardError: variance === null ? null : Math.sqrt(variance / detected),
    censored: options.replicates - detected,
  };
}

/**
 * The three schedules of {@link compareSchedules}, each with its expected days to detection
 * under a growing infection (Monte Carlo, {@link simulateDelay}); one `rng` stream, schedules in
 * order, so the result repeats for a seed.
 */
export function compareSchedulesGrowing(
  input: { ropes: number; intervalDays: number; maxRopes: number },
  model: GrowthModel,
  options: { replicates: number; rng: Rng; maxRounds?: number },
): { options: (ScheduleOption & { simulated: SimulatedDelay })[]; notes: ScheduleNote[] } {
  const atIntroduction = (ropes: number) => model.detectAt(ropes, model.initialInfected);
  const statics = compareSchedules({ ...input, detect: atIntroduction });
  return {
    options: statics.options.map((option) => ({ ...option, simulated: simulateDelay(option, model, options) })),
    notes: [...statics.notes, { kind: 'introduced-prevalence' }],
  };
}
