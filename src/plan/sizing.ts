/**
 * How many ropes: the smallest rope count reaching a detection target in one barn, the
 * allocation of ropes across the barns of a site, and what to say when no rope count reaches the
 * target in one round. The detection model is injected (`detect(ropes)`), so these kernels work
 * with the hypergeometric, the imperfect-rope or the binomial model alike.
 */
import { requireInteger, requireNumber, requireProbability, TARGET_SLACK } from './checks.js';
import { formatPercent } from '../util/format.js';

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
  message: string;
}

/**
 * Rounds needed to reach a cumulative detection target when each round detects with
 * probability `perRound`, independently: the smallest k with 1 - (1 - perRound)^k >= target
 * (Martin, Cameron & Greiner 2007; with one infected pen the ceiling is Se, Cameron & Baldock 1998). Computed from the logarithm and then confirmed by counting, with a
 * slack of 1e-12 so that an exact decimal target such as 0.99 is not missed by rounding.
 * @param perRound per-round detection in [0, 1]
 * @param target cumulative target in (0, 1)
 * @returns k >= 1, or null when perRound = 0 (never reached)
 * @throws RangeError when perRound is outside [0, 1] or target outside (0, 1)
 * @see Martin PAJ, Cameron AR, Greiner M (2007) Demonstrating freedom from disease using
 *   multiple complex data sources 1. Prev Vet Med 79:71-97.
 * @example roundsToReach(0.9, 0.95) === 2
 */
export function roundsToReach(perRound: number, target: number): number | null {
  requireNumber('perRound', perRound, 0, 1);
  requireNumber('target', target, 0, 1, { openMin: true, openMax: true });
  if (perRound === 0) return null;
  if (perRound >= target - TARGET_SLACK) return 1;
  const logMiss = Math.log1p(-perRound);
  let k = Math.max(1, Math.floor(Math.log1p(-target) / logMiss) - 1);
  // -expm1(k log(1-p)) rather than 1 - (1-p)^k: the same value without cancellation near 1.
  while (-Math.expm1(k * logMiss) < target - TARGET_SLACK) k++;
  return k;
}

function unreachable(ceiling: number, target: number, what: string): Unreachable {
  const roundsNeeded = roundsToReach(ceiling, target);
  const message =
    roundsNeeded === null
      ? `No rope count reaches ${formatPercent(target)} detection: ${what} detects nothing (0%).`
      : `No rope count reaches ${formatPercent(target)} detection in one round: ${what} detects ${formatPercent(ceiling)}. ` +
        `${roundsNeeded} negative rounds in a row would reach ${formatPercent(-Math.expm1(roundsNeeded * Math.log1p(-ceiling)))}.`;
  return { reachable: false, ceiling, roundsNeeded, message };
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
  const at = (n: number) => requireProbability('detect', detect(n));
  const ceiling = at(maxRopes);
  if (ceiling < target - TARGET_SLACK)
    return unreachable(ceiling, target, `a rope in every one of the ${maxRopes} pens`);
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

/**
 * Barn-level detection needed in each of k similar barns for a site target C:
 * 1 - (1 - C)^(1/k) (Martin, Cameron & Greiner 2007).
 * @param siteTarget C in (0, 1); @param barns k, integer >= 1
 * @throws RangeError outside those domains
 * @example barnTargetForSite(0.95, 3) // 0.631597...
 */
export function barnTargetForSite(siteTarget: number, barns: number): number {
  requireNumber('siteTarget', siteTarget, 0, 1, { openMin: true, openMax: true });
  requireInteger('barns', barns, 1, Number.MAX_SAFE_INTEGER, '[1, infinity)');
  // -expm1(log1p(-C)/k) keeps the digits that 1 - (1-C)^(1/k) loses for small C.
  return -Math.expm1(Math.log1p(-siteTarget) / barns);
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
  /**
   * 'greedy' when every barn's log-miss is convex (greedy is then optimal), else exact DP;
   * 'balanced' for {@link allocateRopesBalanced} (max-min first, then site detection, both exact DP).
   */
  method: 'greedy' | 'dynamic-programming' | 'balanced';
  /** Budget left over because no further rope raises site detection. */
  unused: number;
}

/** log(1 - p), the quantity that adds across barns; -Infinity when p = 1. */
function logMiss(p: number): number {
  return Math.log1p(-p);
}

function logMissTable(barn: BarnSizing): number[] {
  requireInteger(`maxRopes of ${barn.barnId}`, barn.maxRopes, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  return Array.from({ length: barn.maxRopes + 1 }, (_, n) =>
    logMiss(requireProbability(`detect of ${barn.barnId}`, barn.detect(n))),
  );
}

/** Gain in -log-miss from the (n+1)th rope; 0 once the barn already detects with certainty. */
function gainAt(table: readonly number[], n: number): number {
  const before = table[n]!;
  const after = table[n + 1]!;
  if (before === -Infinity) return 0;
  return before - after; // +Infinity when the rope makes detection certain
}

/**
 * True when a barn's log-miss log(1 - p(n)) is convex in n over [0, maxRopes], i.e. the gain
 * of each further rope never grows (diminishing returns). Under that condition the greedy
 * marginal allocation is optimal (Fox 1966). It holds for the binomial model (log-miss linear in
 * n) but NOT for the finite hypergeometric model, whose miss ratio (N-d-n)/(N-n) shrinks as n
 * grows, so each rope gains more than the last.
 */
export function hasDiminishingReturns(table: readonly number[]): boolean {
  for (let n = 0; n + 2 < table.length; n++) {
    if (gainAt(table, n + 1) > gainAt(table, n) * (1 + 1e-12) + 1e-15) return false;
  }
  return true;
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
 * Greedy marginal allocation (marginal analysis for separable resource allocation): give each
 * next rope to the barn whose log-miss log(1 - p_b(n_b)) drops most; stop when the budget is
 * spent, every barn is full, or no rope gains anything. Optimal for every budget when each
 * barn's log-miss is convex in n (diminishing returns); otherwise only a heuristic. Ties go to
 * the barn listed first.
 * @see Gross O (1956) A class of discrete type minimization problems. RAND RM-1644 (from memory).
 * @see Fox B (1966) Discrete optimization via marginal analysis. Management Science 13:210-216 (from memory).
 */
export function greedyAllocation(barns: readonly BarnSizing[], budget: number): Allocation {
  requireInteger('budget', budget, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const tables = barns.map(logMissTable);
  return greedyOnTables(barns, tables, budget, () => false);
}

function greedyOnTables(
  barns: readonly BarnSizing[],
  tables: number[][],
  budget: number,
  stop: (log: number) => boolean,
): Allocation {
  const ropes = barns.map(() => 0);
  let log = tables.reduce((sum, t) => sum + t[0]!, 0);
  for (let spent = 0; spent < budget && log !== -Infinity && !stop(log); spent++) {
    let best = -1;
    let bestGain = 0;
    barns.forEach((barn, b) => {
      if (ropes[b]! >= barn.maxRopes) return;
      const gain = gainAt(tables[b]!, ropes[b]!);
      if (gain > bestGain) {
        best = b;
        bestGain = gain;
      }
    });
    if (best < 0) break;
    ropes[best]!++;
    log = ropes.reduce((sum, n, b) => sum + tables[b]![n]!, 0);
  }
  return summarise(barns, tables, ropes, 'greedy', budget);
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
 * Allocates a site's rope budget across barns to maximise site detection
 * 1 - prod_b (1 - p_b(n_b)) (Martin, Cameron & Greiner 2007), i.e. to minimise sum_b log(1 - p_b(n_b)).
 * Greedy marginal allocation when every barn has diminishing returns (then optimal: Fox 1966);
 * otherwise exact dynamic programming (the finite hypergeometric model has increasing returns,
 * where greedy can miss the optimum). Ropes that add nothing are left `unused`.
 * @param barns per barn: id, ropes available (in-use pens), detect(n) non-decreasing
 * @param budget ropes for the site, integer >= 0
 * @throws RangeError for a bad budget or maxRopes, or detect returning a value outside [0, 1]
 * @see Fox B (1966) Discrete optimization via marginal analysis. Management Science 13:210-216 (from memory).
 * @see Bellman R (1957) Dynamic Programming (the allocation recursion).
 */
export function allocateRopes(barns: readonly BarnSizing[], budget: number): Allocation {
  requireInteger('budget', budget, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const tables = barns.map(logMissTable);
  const capped = Math.min(
    budget,
    barns.reduce((sum, barn) => sum + barn.maxRopes, 0),
  );
  if (tables.every(hasDiminishingReturns))
    return withUnused(
      greedyOnTables(barns, tables, capped, () => false),
      budget,
    );
  const { log, choice } = dynamicProgramming(barns, tables, capped);
  const needed = smallestBudgetFor(log, log[capped]!, capped);
  const { choice: neededChoice } = needed === capped ? { choice } : dynamicProgramming(barns, tables, needed);
  return summarise(barns, tables, traceBack(barns, neededChoice, needed), 'dynamic-programming', budget);
}

/**
 * Allocates a site's rope budget so that the least-watched barn is watched as well as possible,
 * and then, among the allocations that achieve that, maximises site detection 1 - prod(1 - p_b).
 *
 * Why not maximise 1 - prod(1 - p_b) alone (allocateRopes): that objective assumes every barn is
 * infected at the design prevalence at once, and because the finite hypergeometric model has
 * increasing returns it is often maximised by putting the whole budget into one barn and leaving
 * the others unwatched, which no surveillance program would accept: an introduction comes into
 * one barn, and nobody knows which. The max-min objective is exact by dynamic programming
 * (max-min is decomposable over barns), and the second stage is the DP of allocateRopes restricted
 * to per-barn counts that keep every barn at or above the max-min value.
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
    Array.from({ length: barn.maxRopes + 1 }, (_, n) => requireProbability(`detect of ${barn.barnId}`, barn.detect(n))),
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

function withUnused(allocation: Allocation, budget: number): Allocation {
  return { ...allocation, unused: budget - allocation.total };
}

export interface SiteSizing {
  reachable: boolean;
  allocation: Allocation;
  /** For comparison: ropes when every barn is sized alone to 1 - (1 - C)^(1/k); null if some barn cannot. */
  equalShareTotal: number | null;
  /** When unreachable: the site ceiling, rounds needed and a sentence. */
  unreachable?: Unreachable;
}

/**
 * The fewest ropes for a site target C across k barns: the smallest total whose best allocation
 * reaches 1 - prod(1 - p_b(n_b)) >= C (optional budget as a cap). The optimum allocation for each
 * total is found as in {@link allocateRopes}, so this is never more than sizing every barn alone
 * to 1 - (1 - C)^(1/k), and usually fewer when barns differ.
 * @throws RangeError for a target outside (0, 1) or a bad budget
 * @see Martin, Cameron & Greiner (2007) Prev Vet Med 79:71-97; Fox B (1966) Management Science 13:210-216 (from memory).
 */
export function sizeSite(barns: readonly BarnSizing[], siteTarget: number, budget?: number): SiteSizing {
  requireNumber('siteTarget', siteTarget, 0, 1, { openMin: true, openMax: true });
  if (barns.length === 0) throw new RangeError('`barns` must hold at least one barn, got 0');
  const available = barns.reduce((sum, barn) => sum + barn.maxRopes, 0);
  if (budget !== undefined) requireInteger('budget', budget, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const limit = Math.min(available, budget ?? available);
  const tables = barns.map(logMissTable);
  const targetLog = Math.log1p(-(siteTarget - TARGET_SLACK));
  const barnTarget = barnTargetForSite(siteTarget, barns.length);
  const shares = barns.map((barn) => smallestRopes(barn.detect, barnTarget, barn.maxRopes));
  const equalShareTotal = shares.every((s) => s.reachable)
    ? shares.reduce((sum, s) => sum + (s as Reached).ropes, 0)
    : null;
  let allocation: Allocation;
  if (tables.every(hasDiminishingReturns)) {
    allocation = withUnused(
      greedyOnTables(barns, tables, limit, (log) => log <= targetLog),
      limit,
    );
  } else {
    const { log, choice } = dynamicProgramming(barns, tables, limit);
    let m = 0;
    while (m < limit && log[m]! > targetLog) m++;
    const { choice: atM } = m === limit ? { choice } : dynamicProgramming(barns, tables, m);
    allocation = summarise(barns, tables, traceBack(barns, atM, m), 'dynamic-programming', m);
  }
  allocation = withUnused(allocation, budget ?? allocation.total);
  if (allocation.siteDetection >= siteTarget - TARGET_SLACK) return { reachable: true, allocation, equalShareTotal };
  const what =
    budget !== undefined && budget < available
      ? `the best use of the budget of ${budget} ropes`
      : `a rope in every in-use pen of the site`;
  return {
    reachable: false,
    allocation,
    equalShareTotal,
    unreachable: unreachable(allocation.siteDetection, siteTarget, what),
  };
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
    requireProbability('estimate', last.p);
    requireNumber('standardError', last.standardError, 0, 1);
    if (last.p - margin * last.standardError >= target - TARGET_SLACK) return { ropes: n, estimate: last };
  }
  return { ropes: null, estimate: last };
}
