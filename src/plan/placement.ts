/**
 * Fixed spatial (systematic) rope placement on a barn's real layout.
 *
 * Method: systematic sampling with a rotating start (Cochran 1946; Cochran 1977, ch. 8). Rope k
 * (k = 0..n-1) targets the slot at position floor(k P / n + j) along the barn (P positions per
 * row) in row `order[(k + i) mod R]`, so that ropes stand equidistant along the barn and
 * alternate sides of the alley (R rows; for 4 rows the order 0, 2, 1, 3 makes each alley
 * alternate its own two sides). A phase s in [0, K), K = R ceil(P / n), fixes (i, j) =
 * (s mod R, floor(s / R)).
 *
 * Snapping: first every rope whose target is an in-use pen takes it (targets of one phase are
 * distinct pens, see below); then, in rope order, a rope whose target is empty or out of use
 * moves to the nearest in-use pen not yet taken (Euclidean distance between pen centres; ties:
 * same row as the target, then the lower pen in row-then-position order). Two passes so that a
 * rope that had to move never pushes a rope off its own systematic spot: only ropes aimed at an
 * empty or out-of-use pen move. Empty and out-of-use pens are never chosen.
 *
 * Rotation rule: the start phase s* is the phase whose placement has the smallest covering
 * radius, then the smallest mean distance, then the lowest index; round r uses phase
 * (s* + r) mod K. Any K consecutive rounds therefore use every phase, every slot of the barn is
 * the direct target of one of them (the floor(k P / n) + j, j < ceil(P / n), leave no gap), and
 * a direct target that is in use gets its rope in that round, so every in-use pen has a rope
 * within K rounds. {@link coverageRounds} simulates this.
 *
 * Why targets are distinct: ropes on one row are R P / n >= 1 positions apart (n <= in-use pens
 * <= R P), and the largest target floor((n-1) P / n + J - 1) with J = ceil(P / n) stays below P.
 *
 * @see Cochran WG (1946) Relative accuracy of systematic and stratified random samples for a
 *   certain class of populations. Ann Math Stat 17:164-177.
 * @see Cochran WG (1977) Sampling Techniques, 3rd ed., ch. 8 (systematic sampling).
 */
import type { BarnPlanNote } from './barnNotes.js';
import type { Pen } from '../domain/layout.js';
import { inUsePens, isInUse, penDistance } from '../domain/layout.js';
import { requireInteger } from '../stats/validate.js';
import { keptForBy } from '../util/kept.js';

export interface PlacedRope {
  penId: string;
  row: number;
  rowLabel: string;
  position: number;
  /** The slot the systematic rule aimed at; differs from the pen when the rope was snapped. */
  targetRow: number;
  targetPosition: number;
  snapped: boolean;
}

export interface SystematicPlacement {
  /** Ropes in rope order k (along the barn). */
  ropes: PlacedRope[];
  penIds: string[];
  /** Phase used this round, in [0, cycleLength). */
  phase: number;
  /** The start phase s* (best covering radius, then mean distance). */
  startPhase: number;
  /** K = rows * ceil(positions / ropes): after K rounds every phase has been used once. */
  cycleLength: number;
  /** Largest distance from an in-use pen to its nearest rope, pen units; null without ropes. */
  coveringRadius: number | null;
  /** Mean distance from an in-use pen to its nearest rope, pen units; null without ropes. */
  meanDistance: number | null;
  notes: BarnPlanNote[];
}

export interface SystematicOptions {
  /** Ropes this round, integer in [0, in-use pens]. */
  ropes: number;
  /** Round index (0, 1, 2, ...): moves the placement so that coverage completes over rounds. */
  roundIndex: number;
  /**
   * A periodicity of the barn along the row, in pens (e.g. 4 when every fourth pen is a hospital
   * pen). When a row's ropes fall on fewer phases of the period than they could, a note says so.
   */
  period?: number;
}

interface Grid {
  pens: readonly Pen[];
  inUse: Pen[];
  rows: number;
  positions: number;
  at: (row: number, position: number) => Pen;
  rowLabel: (row: number) => string;
}

/** Row order that makes each alley alternate its sides: rows 0|1 share alley 1, rows 2|3 alley 2. */
const ROW_ORDER: Record<number, number[]> = { 1: [0], 2: [0, 1], 3: [0, 2, 1], 4: [0, 2, 1, 3] };

const EPS = 1e-9;

function buildGrid(pens: readonly Pen[]): Grid {
  if (pens.length === 0) throw new RangeError('`pens` must hold every pen of the barn (expandLayout), got 0 pens');
  const rows = Math.max(...pens.map((p) => p.row)) + 1;
  const positions = Math.max(...pens.map((p) => p.position)) + 1;
  requireInteger('rows', rows, 1, 4);
  const slots = new Map<string, Pen>();
  for (const pen of pens) slots.set(`${pen.row}:${pen.position}`, pen);
  if (slots.size !== rows * positions || pens.length !== rows * positions) {
    throw new RangeError(
      `\`pens\` must hold every pen of the barn (expandLayout), got ${pens.length} pens for ${rows} x ${positions} slots`,
    );
  }
  return {
    pens,
    inUse: inUsePens(pens),
    rows,
    positions,
    at: (row, position) => slots.get(`${row}:${position}`)!,
    rowLabel: (row) => slots.get(`${row}:0`)!.rowLabel,
  };
}

function cycleLengthOf(grid: Grid, ropes: number): number {
  return ropes === 0 ? 1 : grid.rows * Math.ceil(grid.positions / ropes);
}

function placeAtPhase(grid: Grid, ropes: number, phase: number): PlacedRope[] {
  if (ropes === 0) return [];
  const order = ROW_ORDER[grid.rows]!;
  const rowShift = phase % grid.rows;
  const positionShift = Math.floor(phase / grid.rows);
  const targets = Array.from({ length: ropes }, (_, k) => ({
    row: order[(k + rowShift) % grid.rows]!,
    // k * P / ropes computed as an integer division so that exact multiples do not drift.
    position: Math.floor((k * grid.positions) / ropes) + positionShift,
  }));
  const taken = new Set<string>();
  const chosen: (Pen | undefined)[] = targets.map((t) => {
    const pen = grid.at(t.row, t.position);
    if (!isInUse(pen)) return undefined;
    taken.add(pen.id);
    return pen;
  });
  targets.forEach((t, k) => {
    if (chosen[k]) return;
    const target = grid.at(t.row, t.position);
    let best: Pen | undefined;
    let bestDistance = Infinity;
    for (const pen of grid.inUse) {
      if (taken.has(pen.id)) continue;
      const distance = penDistance(pen, target);
      const better =
        distance < bestDistance - EPS ||
        (Math.abs(distance - bestDistance) <= EPS && best !== undefined && pen.row === t.row && best.row !== t.row);
      if (better) {
        best = pen;
        bestDistance = distance;
      }
    }
    // ropes <= in-use pens, so a free in-use pen always remains.
    taken.add(best!.id);
    chosen[k] = best;
  });
  return targets.map((t, k) => {
    const pen = chosen[k]!;
    return {
      penId: pen.id,
      row: pen.row,
      rowLabel: pen.rowLabel,
      position: pen.position,
      targetRow: t.row,
      targetPosition: t.position,
      snapped: pen.row !== t.row || pen.position !== t.position,
    };
  });
}

/**
 * Covering radius and mean nearest-rope distance of a set of roped pens: for every in-use pen,
 * the distance to the nearest rope; the radius is the largest, the mean their average. These are
 * the design quantities for finding a contiguous cluster with a systematic layer.
 * @param pens every pen of the barn (only in-use pens count)
 * @param penIds the roped pens (ids of `pens`)
 * @returns null values when there are no ropes or no in-use pens (never NaN)
 * @throws RangeError if an id is not a pen of `pens`
 * @see Cochran WG (1977) Sampling Techniques, ch. 8.
 */
export function placementDistances(
  pens: readonly Pen[],
  penIds: readonly string[],
): { coveringRadius: number | null; meanDistance: number | null } {
  const byId = new Map(pens.map((p) => [p.id, p]));
  const roped = penIds.map((id) => {
    const pen = byId.get(id);
    if (!pen) throw new RangeError(`\`penIds\` must name pens of the barn, got ${JSON.stringify(id)}`);
    return pen;
  });
  return nearestRopeDistances(inUsePens(pens), roped);
}

/** placementDistances over the in-use pens and the roped pens themselves. */
function nearestRopeDistances(
  inUse: readonly Pen[],
  roped: readonly Pen[],
): { coveringRadius: number | null; meanDistance: number | null } {
  if (roped.length === 0 || inUse.length === 0) return { coveringRadius: null, meanDistance: null };
  let radius = 0;
  let total = 0;
  for (const pen of inUse) {
    let nearest = Infinity;
    for (const rope of roped) nearest = Math.min(nearest, penDistance(pen, rope));
    radius = Math.max(radius, nearest);
    total += nearest;
  }
  return { coveringRadius: radius, meanDistance: total / inUse.length };
}

/**
 * The start phase of each rope count, by the barn's pens (an array as expandLayout returns it,
 * which must not change while it is held): the confidence of every round, the plan and its
 * coverage ask for the same barn and rope count again, and the search places every phase.
 */
const startPhases = new WeakMap<readonly Pen[], Map<number, number>>();

function bestStartPhase(grid: Grid, ropes: number): number {
  return keptForBy(startPhases, grid.pens, ropes, () => searchStartPhase(grid, ropes));
}

function searchStartPhase(grid: Grid, ropes: number): number {
  const cycle = cycleLengthOf(grid, ropes);
  let best = 0;
  let bestRadius = Infinity;
  let bestMean = Infinity;
  for (let phase = 0; phase < cycle; phase++) {
    const { coveringRadius, meanDistance } = nearestRopeDistances(
      grid.inUse,
      placeAtPhase(grid, ropes, phase).map((r) => grid.at(r.row, r.position)),
    );
    const radius = coveringRadius ?? Infinity;
    const mean = meanDistance ?? Infinity;
    if (radius < bestRadius - EPS || (Math.abs(radius - bestRadius) <= EPS && mean < bestMean - EPS)) {
      best = phase;
      bestRadius = radius;
      bestMean = mean;
    }
  }
  return best;
}

function gcd(a: number, b: number): number {
  return b === 0 ? a : gcd(b, a % b);
}

/**
 * Aliasing check: when the ropes of a row stand a constant s pens apart and s shares a factor
 * g > 1 with the barn's period, every round samples only period / g of the period's positions
 * (e.g. always the pen beside the hospital pen). A fractional interval (gaps of 5 and 6) breaks
 * the alignment and is not flagged.
 */
function periodNotes(grid: Grid, ropes: PlacedRope[], period: number): BarnPlanNote[] {
  const notes: BarnPlanNote[] = [];
  for (let row = 0; row < grid.rows; row++) {
    const positions = ropes
      .filter((r) => r.targetRow === row)
      .map((r) => r.targetPosition)
      .sort((a, b) => a - b);
    if (positions.length < 2) continue;
    const gaps = new Set(positions.slice(1).map((p, i) => p - positions[i]!));
    if (gaps.size !== 1) continue;
    const interval = [...gaps][0]!;
    const shared = gcd(interval, period);
    if (shared > 1) {
      notes.push({ kind: 'period-shared', row: grid.rowLabel(row), interval, shared, period });
    }
  }
  return notes;
}

function validate(grid: Grid, options: SystematicOptions): void {
  requireInteger('ropes', options.ropes, 0, grid.inUse.length, '[0, in-use pens]');
  requireInteger('roundIndex', options.roundIndex, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  if (options.period !== undefined) requireInteger('period', options.period, 2, grid.positions, '[2, pens per row]');
}

/**
 * Systematic rope placement for one round (see the module comment for the rule).
 * @param pens every pen of the barn as `expandLayout` returns it (statuses decide which count)
 * @param options ropes (integer in [0, in-use pens]), roundIndex (integer >= 0), period (pens)
 * @throws RangeError for a rope count outside [0, in-use pens], a negative or fractional round
 *   index, a period outside [2, pens per row], or `pens` that are not a full rows x positions grid
 * @see Cochran WG (1977) Sampling Techniques, ch. 8.
 * @example placeSystematic(expandLayout(oneRowOfSix), { ropes: 2, roundIndex: 0 }).penIds // ['A2', 'A5']
 */
export function placeSystematic(pens: readonly Pen[], options: SystematicOptions): SystematicPlacement {
  const grid = buildGrid(pens);
  validate(grid, options);
  const cycleLength = cycleLengthOf(grid, options.ropes);
  const startPhase = bestStartPhase(grid, options.ropes);
  const phase = (startPhase + (options.roundIndex % cycleLength)) % cycleLength;
  const ropes = placeAtPhase(grid, options.ropes, phase);
  const penIds = ropes.map((r) => r.penId);
  const distances = placementDistances(pens, penIds);
  const notes = options.period !== undefined ? periodNotes(grid, ropes, options.period) : [];
  const snapped = ropes.filter((r) => r.snapped).length;
  if (snapped > 0) notes.push({ kind: 'snapped', snapped, ropes: ropes.length });
  return { ropes, penIds, phase, startPhase, cycleLength, ...distances, notes };
}

export interface CoverageRounds {
  /** Rounds, starting at `fromRound`, until every in-use pen has had a rope. */
  rounds: number;
  /** The rotation's cycle length K (an upper bound for `rounds`). */
  cycleLength: number;
  /** In-use pens of the barn, every one covered after `rounds`. */
  inUsePens: number;
}

/**
 * How many rounds of the rotation (from `fromRound`) it takes until every in-use pen has had a
 * rope, found by simulating the rotation round by round. The rule guarantees at most K =
 * rows * ceil(positions / ropes) rounds; a simulation that exceeded K would be a bug and throws.
 * @param pens every pen of the barn (expandLayout)
 * @param ropes ropes per round, integer in [1, in-use pens]
 * @throws RangeError for ropes outside [1, in-use pens]
 * @see Cochran WG (1977) Sampling Techniques, ch. 8.
 */
export function coverageRounds(pens: readonly Pen[], ropes: number, fromRound = 0): CoverageRounds {
  const grid = buildGrid(pens);
  requireInteger('ropes', ropes, 1, Math.max(1, grid.inUse.length), '[1, in-use pens]');
  requireInteger('fromRound', fromRound, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const cycleLength = cycleLengthOf(grid, ropes);
  const startPhase = bestStartPhase(grid, ropes);
  const covered = new Set<string>();
  for (let round = 0; round < cycleLength; round++) {
    const phase = (startPhase + ((fromRound + round) % cycleLength)) % cycleLength;
    for (const rope of placeAtPhase(grid, ropes, phase)) covered.add(rope.penId);
    if (covered.size === grid.inUse.length) {
      return { rounds: round + 1, cycleLength, inUsePens: grid.inUse.length };
    }
  }
  throw new Error(`rotation did not cover all in-use pens within ${cycleLength} rounds (placement rule broken)`);
}
