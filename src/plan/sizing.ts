/**
 * How many ropes: the smallest rope count reaching a detection target in one barn, the
 * allocation of ropes across the barns of a site, and the figures of the case where no rope count reaches the
 * target in one round. The detection model is injected (`detect(ropes)`), so these kernels work
 * with the hypergeometric, the imperfect-rope or the binomial model alike.
 */
import { requireInteger, requireNumber, requireReturnedProbability, TARGET_SLACK } from '../stats/validate.js';
import { roundsToReach } from '../stats/sampleSize.js';

/** Detection probability of one round with `ropes` ropes; must be non-decreasing in `ropes`. */
export type DetectFn = (ropes: number) => number;

export interface Reached {
  reachable: true;
  ropes: number;
  /** detect(ropes) */
  achieved: number;
}

export interface Unreachable {
  reachable: false;
  /** The best one round can do (every available rope hung). */
  ceiling: number;
  /** Smallest k with 1 - (1 - ceiling)^k >= target; null when the ceiling is 0. */
  roundsNeeded: number | null;
  /** The target asked for and the pens a rope each went to (src/report/barnPlanNotes.ts words it). */
  target: number;
  maxRopes: number;
  /** 1 - (1 - ceiling)^roundsNeeded: what that many negative rounds reach; null when the ceiling is 0. */
  reachedInRounds: number | null;
}

function unreachable(ceiling: number, target: number, maxRopes: number): Unreachable {
  const roundsNeeded = roundsToReach(target, ceiling);
  const reachedInRounds = roundsNeeded === null ? null : -Math.expm1(roundsNeeded * Math.log1p(-ceiling));
  return { reachable: false, ceiling, roundsNeeded, target, maxRopes, reachedInRounds };
}

/**
 * Sample size for a detection target, finite barn: the smallest n in [0, maxRopes] with
 * detect(n) >= target, by bisection on the monotone `detect` (Cameron & Baldock 1998, Prev Vet Med 34:1-17, exact search). When even
 * detect(maxRopes) falls short (e.g. Se = 0.9 < target 0.95 with one infected pen, method 11),
 * returns the ceiling and the number of rounds that would reach the target instead.
 * @param detect non-decreasing detection probability of n ropes, n in [0, maxRopes]
 * @param target detection target in (0, 1)
 * @param maxRopes ropes available (in-use pens), integer >= 0
 * @throws RangeError for a target outside (0, 1), a bad maxRopes, or detect returning a value
 *   outside [0, 1]
 * @see Cameron AR, Baldock FC (1998) A new probability formula for surveys to substantiate
 *   freedom from disease. Prev Vet Med 34:1-17.
 * @example smallestRopes(n => 1 - (36 - n) / 36, 0.5, 36) // { reachable: true, ropes: 18 }
 */
export function smallestRopes(detect: DetectFn, target: number, maxRopes: number): Reached | Unreachable {
  requireNumber('target', target, 0, 1, { openMin: true, openMax: true });
  requireInteger('maxRopes', maxRopes, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const at = (n: number) => requireReturnedProbability('detect', detect(n));
  const ceiling = at(maxRopes);
  if (ceiling < target - TARGET_SLACK) return unreachable(ceiling, target, maxRopes);
  let low = 0; // detect(low) may fall short
  let high = maxRopes; // detect(high) reaches the target
  if (at(0) >= target - TARGET_SLACK) return { reachable: true, ropes: 0, achieved: at(0) };
  while (high - low > 1) {
    const mid = Math.floor((low + high) / 2);
    if (at(mid) >= target - TARGET_SLACK) high = mid;
    else low = mid;
  }
  return { reachable: true, ropes: high, achieved: at(high) };
}

export interface BarnSizing {
  barnId: string;
  /** Ropes available in the barn (in-use pens). */
  maxRopes: number;
  detect: DetectFn;
}

export interface Allocation {
  /** Ropes per barn, in input order. */
  ropes: { barnId: string; ropes: number; detection: number }[];
  total: number;
  /** Site detection 1 - prod(1 - p_b(n_b)). */
  siteDetection: number;
  /** 'balanced': {@link allocateRopesBalanced} (max-min first, then site detection, both exact DP). */
  method: 'balanced';
  /** Budget left over because no further rope raises site detection. */
  unused: number;
}

/** log(1 - p), the quantity that adds across barns; -Infinity when p = 1. */
function logMiss(p: number): number {
  return Math.log1p(-p);
}

function summarise(
  barns: readonly BarnSizing[],
  tables: number[][],
  ropes: number[],
  method: Allocation['method'],
  budget: number,
): Allocation {
  const total = ropes.reduce((a, b) => a + b, 0);
  const log = ropes.reduce((sum, n, b) => sum + tables[b]![n]!, 0);
  return {
    ropes: barns.map((barn, b) => ({
      barnId: barn.barnId,
      ropes: ropes[b]!,
      detection: -Math.expm1(tables[b]![ropes[b]!]!),
    })),
    total,
    siteDetection: -Math.expm1(log),
    method,
    unused: budget - total,
  };
}

/**
 * Exact optimum by dynamic programming over barns: best[b][m] = the smallest total log-miss of
 * the first b barns with m ropes, O(barns * budget^2). Among equal optima the smaller total, then
 * the earlier barns get more ropes.
 */
function dynamicProgramming(
  barns: readonly BarnSizing[],
  tables: number[][],
  budget: number,
): { log: number[]; choice: number[][] } {
  let best: number[] = Array.from({ length: budget + 1 }, () => 0);
  const choice: number[][] = [];
  for (let b = 0; b < barns.length; b++) {
    const table = tables[b]!;
    const next: number[] = [];
    const pick: number[] = [];
    for (let m = 0; m <= budget; m++) {
      let value = Infinity;
      let arg = 0;
      for (let n = 0; n <= Math.min(m, barns[b]!.maxRopes); n++) {
        const candidate = best[m - n]! + table[n]!;
        if (candidate < value) {
          value = candidate;
          arg = n;
        }
      }
      next.push(value);
      pick.push(arg);
    }
    best = next;
    choice.push(pick);
  }
  return { log: best, choice };
}

function traceBack(barns: readonly BarnSizing[], choice: number[][], budget: number): number[] {
  const ropes = barns.map(() => 0);
  let m = budget;
  for (let b = barns.length - 1; b >= 0; b--) {
    ropes[b] = choice[b]![m]!;
    m -= ropes[b]!;
  }
  return ropes;
}

/** The smallest budget m <= limit whose optimum equals the optimum at `limit` (no wasted ropes). */
function smallestBudgetFor(log: readonly number[], value: number, limit: number): number {
  const slack = Number.isFinite(value) ? Math.abs(value) * 1e-12 : 0;
  for (let m = 0; m <= limit; m++) if (log[m]! <= value + slack) return m;
  return limit;
}

/**
 * Allocates a site's rope budget so that the least-watched barn is watched as well as possible,
 * and then, among the allocations that achieve that, maximises site detection 1 - prod(1 - p_b).
 *
 * Why not maximise 1 - prod(1 - p_b) alone: that objective assumes every barn is
 * infected at the design prevalence at once, and because the finite hypergeometric model has
 * increasing returns it is often maximised by putting the whole budget into one barn and leaving
 * the others unwatched, which no surveillance program would accept: an introduction comes into
 * one barn, and nobody knows which. The max-min objective is exact by dynamic programming
 * (max-min is decomposable over barns), and the second stage is the DP maximising site detection,
 * restricted to per-barn counts that keep every barn at or above the max-min value.
 * @param barns per barn: id, ropes available (in-use pens), detect(n) non-decreasing
 * @param budget ropes for the site, integer >= 0
 * @throws RangeError for a bad budget or maxRopes, or detect returning a value outside [0, 1]
 * @see Bellman R (1957) Dynamic Programming (the allocation recursion); Luss H (1999) On equitable
 *   resource allocation problems: a lexicographic minimax approach, Operations Research 47:361-378 (from memory).
 */
export function allocateRopesBalanced(barns: readonly BarnSizing[], budget: number): Allocation {
  requireInteger('budget', budget, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const capped = Math.min(
    budget,
    barns.reduce((sum, barn) => sum + barn.maxRopes, 0),
  );
  const detections = barns.map((barn) =>
    Array.from({ length: barn.maxRopes + 1 }, (_, n) =>
      requireReturnedProbability(`detect of ${barn.barnId}`, barn.detect(n)),
    ),
  );
  // Stage 1: best[m] = the largest min_b p_b over the barns so far with m ropes.
  let best: number[] = Array.from({ length: capped + 1 }, () => 1);
  for (let b = 0; b < barns.length; b++) {
    const table = detections[b]!;
    best = best.map((_, m) => {
      let value = -1;
      for (let n = 0; n <= Math.min(m, barns[b]!.maxRopes); n++)
        value = Math.max(value, Math.min(best[m - n]!, table[n]!));
      return value;
    });
  }
  const floor = best[capped]!;
  // Stage 2: maximise site detection among counts that keep every barn at or above the floor.
  const tables = detections.map((table) => table.map((p) => (p >= floor - 1e-12 ? logMiss(p) : Infinity)));
  const { log, choice } = dynamicProgramming(barns, tables, capped);
  const needed = smallestBudgetFor(log, log[capped]!, capped);
  const { choice: neededChoice } = needed === capped ? { choice } : dynamicProgramming(barns, tables, needed);
  return summarise(
    barns,
    detections.map((table) => table.map(logMiss)),
    traceBack(barns, neededChoice, needed),
    'balanced',
    budget,
  );
}

/** A Monte Carlo detection estimate of n ropes: the mean over simulated outbreaks and its standard error. */
export interface EstimatedDetection {
  p: number;
  standardError: number;
}

export interface ConservativeReach {
  /** The smallest n whose estimate minus `margin` standard errors reaches the target; null when none does. */
  ropes: number | null;
  /** The estimate at that n (or at maxRopes when none reaches). */
  estimate: EstimatedDetection;
}

/**
 * Sample size from a Monte Carlo detection model whose answer must not hang on the random seed:
 * the smallest n in [1, maxRopes] with p(n) - margin * SE(n) >= target. Requiring the lower end
 * of an approximate one-sided interval (margin 2: about 97.7% under the normal approximation of
 * the mean of the simulated outbreaks) rather than the point estimate moves the chosen count
 * away from the boundary where a different seed would flip it by one rope. Scanned upwards, not
 * bisected: an estimate need not be exactly monotone in n.
 * @param estimate the estimate and its standard error for n ropes
 * @param target detection target in (0, 1)
 * @param maxRopes ropes available, integer >= 0
 * @param margin standard errors to subtract, >= 0 (2 by default)
 * @throws RangeError for a target outside (0, 1), a bad maxRopes or margin, or an estimate outside [0, 1]
 * @see Koehler E, Brown E, Haneuse SJ-PA (2009) On the assessment of Monte Carlo error in
 *   simulation-based statistical analyses. Am Stat 63:155-162 (from memory).
 */
export function smallestRopesConservative(
  estimate: (ropes: number) => EstimatedDetection,
  target: number,
  maxRopes: number,
  margin = 2,
): ConservativeReach {
  requireNumber('target', target, 0, 1, { openMin: true, openMax: true });
  requireInteger('maxRopes', maxRopes, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  requireNumber('margin', margin, 0, Number.MAX_VALUE);
  let last: EstimatedDetection = { p: 0, standardError: 0 };
  for (let n = 1; n <= maxRopes; n++) {
    last = estimate(n);
    requireReturnedProbability('estimate', last.p);
    requireNumber('standardError', last.standardError, 0, 1);
    if (last.p - margin * last.standardError >= target - TARGET_SLACK) return { ropes: n, estimate: last };
  }
  return { ropes: null, estimate: last };
}
