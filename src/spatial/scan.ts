/**
 * Spatial scan statistic, Bernoulli model: the circular group of neighbouring sampled pens
 * whose share of positive ropes is most unlike the rest of the barn.
 */
import { fillUniform, type Rng } from '../util/random.js';
import { keptOfFrozenBy } from '../util/kept.js';
import { logChoose } from './combinatorics.js';
import type { SpatialPoint } from './weights.js';

export interface ScanCluster {
  /** Pen ids inside the window, nearest to the centre first. */
  pens: string[];
  centre: string;
  /** Distance from the centre to the farthest pen of the window, pen units. */
  radius: number;
  positives: number;
  /** Expected positives in the window under the null, m C / N. */
  expected: number;
  /** Log-likelihood ratio of the window (Bernoulli model). */
  llr: number;
  /** Monte Carlo p = (1 + #{max LLR of a permutation >= llr}) / (1 + permutations). */
  p: number;
}

export interface ScanResult {
  n: number;
  positives: number;
  /** Most likely cluster; null when no window has more positives than expected (e.g. none, or all positive). */
  mostLikely: ScanCluster | null;
  /** Further windows in decreasing LLR that share no pen with a window listed before them. */
  secondary: ScanCluster[];
  windows: number;
  maxWindowPens: number;
  permutations: number;
}

export interface ScanOptions {
  rng: Rng;
  /** Monte Carlo replicates, integer >= 1. */
  permutations: number;
  /** Largest window as a share of the sampled pens, in (0, 0.5]; default 0.5. */
  maxFraction?: number;
  /** Largest window radius in pen units (default: no limit besides maxFraction). */
  maxRadius?: number;
  /** Most secondary clusters to list (default 5). */
  maxSecondary?: number;
}

/** Precomputed circular windows: prefixes of each centre's distance order that are complete circles. */
export interface ScanWindows {
  n: number;
  order: Int32Array[];
  sizes: Int32Array[];
  radii: Float64Array[];
}

/**
 * Circular windows of nearest sampled pens: for each centre pen, the pens by increasing
 * distance, cut only where the next pen is strictly farther (a circle holds every pen at its
 * radius), up to `maxPens` pens and `maxRadius`.
 */
export function scanWindows(points: readonly SpatialPoint[], maxPens: number, maxRadius = Infinity): ScanWindows {
  const n = points.length;
  const order: Int32Array[] = [];
  const sizes: Int32Array[] = [];
  const radii: Float64Array[] = [];
  for (let c = 0; c < n; c++) {
    const p = points[c]!;
    const d = points
      .map((q, j) => [j, Math.hypot(q.x - p.x, q.y - p.y)] as const)
      .sort((a, b) => a[1] - b[1] || (a[0] === c ? -1 : b[0] === c ? 1 : a[0] - b[0]));
    order.push(Int32Array.from(d, (e) => e[0]));
    const s: number[] = [];
    const r: number[] = [];
    for (let m = 1; m <= Math.min(maxPens, n); m++) {
      const radius = d[m - 1]![1];
      if (radius > maxRadius + 1e-9) break;
      if (m < n && d[m]![1] <= radius + 1e-9) continue;
      s.push(m);
      r.push(radius);
    }
    sizes.push(Int32Array.from(s));
    radii.push(Float64Array.from(r));
  }
  return { n, order, sizes, radii };
}

/**
 * The windows of frozen points (a rope set's geometry hands out frozen points), kept while the
 * points live, by their limits: a rope set reviewed again is not sorted again.
 */
const windowsOfFrozen = new WeakMap<readonly SpatialPoint[], Map<string, ScanWindows>>();

function windowsFor(points: readonly SpatialPoint[], maxPens: number, maxRadius: number): ScanWindows {
  return keptOfFrozenBy(windowsOfFrozen, points, `${maxPens} ${maxRadius}`, () =>
    scanWindows(points, maxPens, maxRadius),
  );
}

/** Table of k ln k for k = 0..n (0 ln 0 = 0), so each window LLR is four lookups. */
function xlogxTable(n: number): Float64Array {
  const t = new Float64Array(n + 1);
  for (let k = 1; k <= n; k++) t[k] = k * Math.log(k);
  return t;
}

/**
 * Bernoulli LLR of a window with c of m pens positive, C of N overall, when c/m > (C-c)/(N-m):
 * [c ln(c/m) + (m-c) ln((m-c)/m)] + [(C-c) ln((C-c)/(N-m)) + (N-m-C+c) ln((N-m-C+c)/(N-m))]
 * - [C ln(C/N) + (N-C) ln((N-C)/N)], else 0.
 */
function llrOf(t: Float64Array, c: number, m: number, C: number, N: number, nullLl: number): number {
  if (c * (N - m) <= (C - c) * m) return 0;
  const inside = t[c]! + t[m - c]! - t[m]!;
  const outside = t[C - c]! + t[N - m - C + c]! - t[N - m]!;
  return inside + outside - nullLl;
}

function maxLlr(win: ScanWindows, label: Uint8Array, C: number, t: Float64Array, nullLl: number): number {
  let best = 0;
  for (let c0 = 0; c0 < win.n; c0++) {
    const order = win.order[c0]!;
    const sizes = win.sizes[c0]!;
    let count = 0;
    let at = 0;
    for (let s = 0; s < sizes.length; s++) {
      const m = sizes[s]!;
      while (at < m) count += label[order[at++]!]!;
      const v = llrOf(t, count, m, C, win.n, nullLl);
      if (v > best) best = v;
    }
  }
  return best;
}

/** Most pens a placement's key holds: bits 0-30 in one number, 31-52 in another (exact below 2^53). */
const KEYED_PENS = 53;

/**
 * The maximum LLR of each of `permutations` placements of the C positives: a partial
 * Fisher-Yates shuffle per placement (the first C slots of the pool become a uniform C-subset),
 * its C draws taken from `rng` in order. The maximum depends only on which pens are positive, so
 * when the placements are few against the replicates (C(n, C) at most four times their number, as
 * with the one or two positives of most rounds), each placement's maximum is kept by its set of
 * pens and looked up when the same set comes again: the same draws, the same maxima.
 */
function simulatedMaxima(
  win: ScanWindows,
  C: number,
  t: Float64Array,
  nullLl: number,
  permutations: number,
  rng: Rng,
): Float64Array {
  const n = win.n;
  const simMax = new Float64Array(permutations);
  const pool = Int32Array.from({ length: n }, (_, i) => i);
  const perm = new Uint8Array(n);
  const draws = new Float64Array(C);
  const seen = n <= KEYED_PENS && logChoose(n, C) <= Math.log(4 * permutations) ? new Map<number, number>() : undefined;
  for (let m = 0; m < permutations; m++) {
    perm.fill(0);
    fillUniform(rng, draws, C);
    let low = 0;
    let high = 0;
    for (let k = 0; k < C; k++) {
      const r = k + Math.floor(draws[k]! * (n - k));
      const tmp = pool[k]!;
      pool[k] = pool[r]!;
      pool[r] = tmp;
      const pen = pool[k]!;
      perm[pen] = 1;
      if (pen < 31) low |= 1 << pen;
      else high |= 1 << (pen - 31);
    }
    if (seen === undefined) {
      simMax[m] = maxLlr(win, perm, C, t, nullLl);
      continue;
    }
    const key = (low >>> 0) + high * 2147483648;
    let value = seen.get(key);
    if (value === undefined) {
      value = maxLlr(win, perm, C, t, nullLl);
      seen.set(key, value);
    }
    simMax[m] = value;
  }
  return simMax;
}

/**
 * Spatial scan statistic, Bernoulli model: over circular windows of the nearest sampled pens
 * (up to `maxFraction` of the pens, default half, and `maxRadius`), the window with the largest
 * log-likelihood ratio (formula at llrOf) is the most likely cluster. Significance by Monte
 * Carlo: the positive flags are permuted over the pens with the number of positives fixed, and
 * p = (1 + #{max LLR_sim >= LLR}) / (1 + m). Secondary clusters are the next windows by LLR that
 * overlap no window already listed, each compared with the same null distribution of the
 * maximum (conservative for them).
 *
 * @example bernoulliScan(rowOf6, [f,t,t,f,f,f], ...).mostLikely // pens P1-P3, llr = ln 3 + 2 ln 1.5, p -> 9/15 (test/spatial/scan.test.ts)
 * @param points sampled in-use pens with coordinates (pen units); a frozen array is taken to stay
 *   as it is, so its windows are made once.
 * @param positive one flag per point.
 * @throws RangeError on mismatched lengths, fewer than 2 pens or bad options.
 * @see Kulldorff M. (1997) A spatial scan statistic, Communications in Statistics - Theory and
 *   Methods 26:1481-1496.
 */
// Kept as one function (about 80 lines): the Monte Carlo replicate loop shares the candidate
// circles and the running maxima with the observed pass, and splitting it would add a closure
// call per circle per replicate in the hottest loop of the round review.
export function bernoulliScan(
  points: readonly SpatialPoint[],
  positive: readonly boolean[],
  options: ScanOptions,
): ScanResult {
  const n = points.length;
  if (n < 2) throw new RangeError(`\`pens\` must be an integer in [2, Infinity), got ${n}`);
  if (positive.length !== n)
    throw new RangeError(`\`positive\` must have one flag per pen (${n}), got ${positive.length}`);
  const { permutations, rng } = options;
  if (!Number.isInteger(permutations) || permutations < 1)
    throw new RangeError(`\`permutations\` must be an integer >= 1, got ${permutations}`);
  const maxFraction = options.maxFraction ?? 0.5;
  if (!(maxFraction > 0 && maxFraction <= 0.5))
    throw new RangeError(`\`maxFraction\` must be a number in (0, 0.5], got ${maxFraction}`);
  const maxRadius = options.maxRadius ?? Infinity;
  if (!(maxRadius > 0)) throw new RangeError(`\`maxRadius\` must be a number > 0, got ${maxRadius}`);
  const maxSecondary = options.maxSecondary ?? 5;
  const maxPens = Math.max(1, Math.floor(n * maxFraction));
  const win = windowsFor(points, maxPens, maxRadius);
  const label = Uint8Array.from(positive, (b) => (b ? 1 : 0));
  const C = label.reduce((s, v) => s + v, 0);
  const t = xlogxTable(n);
  const nullLl = t[C]! + t[n - C]! - t[n]!;
  const windows = win.sizes.reduce((s, a) => s + a.length, 0);
  const base = { n, positives: C, windows, maxWindowPens: maxPens, permutations };

  const found: { centre: number; size: number; radius: number; count: number; llr: number }[] = [];
  for (let c0 = 0; c0 < n; c0++) {
    const order = win.order[c0]!;
    const sizes = win.sizes[c0]!;
    let count = 0;
    let at = 0;
    for (let s = 0; s < sizes.length; s++) {
      const m = sizes[s]!;
      while (at < m) count += label[order[at++]!]!;
      const v = llrOf(t, count, m, C, n, nullLl);
      if (v > 0) found.push({ centre: c0, size: m, radius: win.radii[c0]![s]!, count, llr: v });
    }
  }
  if (found.length === 0) return { ...base, mostLikely: null, secondary: [] };
  found.sort((a, b) => b.llr - a.llr || a.size - b.size || a.centre - b.centre);

  const simMax = simulatedMaxima(win, C, t, nullLl, permutations, rng);
  const pOf = (llr: number) => {
    const threshold = llr - 1e-9 * Math.max(1, llr);
    let b = 0;
    for (let m = 0; m < permutations; m++) if (simMax[m]! >= threshold) b++;
    return (1 + b) / (1 + permutations);
  };
  const used = new Uint8Array(n);
  const clusters: ScanCluster[] = [];
  for (const f of found) {
    if (clusters.length > maxSecondary) break;
    const members = Array.from(win.order[f.centre]!.subarray(0, f.size));
    if (members.some((i) => used[i])) continue;
    for (const i of members) used[i] = 1;
    clusters.push({
      pens: members.map((i) => points[i]!.id),
      centre: points[f.centre]!.id,
      radius: f.radius,
      positives: f.count,
      expected: (f.size * C) / n,
      llr: f.llr,
      p: pOf(f.llr),
    });
  }
  return { ...base, mostLikely: clusters[0] ?? null, secondary: clusters.slice(1) };
}
