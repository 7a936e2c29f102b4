/**
 * Spatial weights among the sampled pens of a round, in a sparse (compressed row) form.
 *
 * Every statistic in src/spatial reads weights through this one structure so that the hot
 * loops (permutations, scan, spread) walk typed arrays instead of dense n x n matrices.
 */
import { expandLayout, penContacts, type BarnLayout } from '../domain/layout.js';
import { keptOfFrozen } from '../util/kept.js';

/** A point in pen units (barn or site coordinates). */
export interface SpatialPoint {
  id: string;
  x: number;
  y: number;
}

export type WeightStyle = 'binary' | 'row';
export type BarnConvention = 'fence' | 'rook' | 'queen';

/** How the weights among a round's sampled pens are made (see defaultWeights for 'default'). */
export type WeightChoice =
  | { kind: 'default' }
  | { kind: 'contact'; convention: BarnConvention }
  | { kind: 'knn'; k: number }
  | { kind: 'band'; band: number; power?: number }
  | { kind: 'lists'; neighbours: Record<string, string[]> };

/**
 * Sparse weights: the neighbours of pen i are `neighbours[offsets[i] .. offsets[i+1])` with
 * weights `weights[...]` at the same positions. No self-weights (w_ii = 0).
 */
export interface SpatialWeights {
  readonly ids: readonly string[];
  readonly offsets: Int32Array;
  readonly neighbours: Int32Array;
  readonly weights: Float64Array;
  readonly style: WeightStyle | 'general';
  /** Pens with no neighbour: their row stays empty (row-standardisation never divides by 0). */
  readonly isolates: readonly string[];
  /** How the weights were built, for the report. */
  readonly description: string;
}

/** The sums S0, S1, S2 of Cliff & Ord (1981). */
export interface WeightConstants {
  s0: number;
  s1: number;
  s2: number;
}

function checkIds(ids: readonly string[]): Map<string, number> {
  if (ids.length === 0) throw new RangeError('`pens` must list at least 1 pen, got 0');
  const index = new Map<string, number>();
  ids.forEach((id, i) => {
    if (index.has(id)) throw new RangeError(`\`pens\` must have unique ids, got ${id} twice`);
    index.set(id, i);
  });
  return index;
}

/**
 * Builds sparse weights from an undirected edge list (each pair once or twice; duplicates and
 * self-pairs are ignored). Binary weights are 1 per edge; `row` divides each row by its sum,
 * except a row with no neighbours, which stays empty and is reported as an isolate.
 *
 * @param ids pen ids in the order used by every vector passed with these weights.
 * @param edges pairs of indices into `ids`, optionally with a positive weight (default 1).
 * @throws RangeError on a bad index or a non-positive or non-finite weight.
 */
export function weightsFromEdges(
  ids: readonly string[],
  edges: readonly (readonly [number, number] | readonly [number, number, number])[],
  style: WeightStyle,
  description: string,
): SpatialWeights {
  const n = ids.length;
  checkIds(ids);
  const rows: Map<number, number>[] = Array.from({ length: n }, () => new Map());
  for (const edge of edges) {
    const [i, j] = edge;
    const w = edge.length === 3 ? edge[2] : 1;
    if (!Number.isInteger(i) || i < 0 || i >= n)
      throw new RangeError(`\`edge index\` must be an integer in [0, ${n - 1}], got ${i}`);
    if (!Number.isInteger(j) || j < 0 || j >= n)
      throw new RangeError(`\`edge index\` must be an integer in [0, ${n - 1}], got ${j}`);
    if (!(Number.isFinite(w) && w > 0)) throw new RangeError(`\`edge weight\` must be a finite number > 0, got ${w}`);
    if (i === j) continue;
    rows[i]!.set(j, w);
    rows[j]!.set(i, w);
  }
  return packRows(ids, rows, style, description);
}

function packRows(
  ids: readonly string[],
  rows: Map<number, number>[],
  style: WeightStyle,
  description: string,
): SpatialWeights {
  const n = ids.length;
  const offsets = new Int32Array(n + 1);
  let total = 0;
  for (let i = 0; i < n; i++) {
    total += rows[i]!.size;
    offsets[i + 1] = total;
  }
  const neighbours = new Int32Array(total);
  const weights = new Float64Array(total);
  const isolates: string[] = [];
  for (let i = 0; i < n; i++) {
    const entries = [...rows[i]!.entries()].sort((a, b) => a[0] - b[0]);
    if (entries.length === 0) isolates.push(ids[i]!);
    let rowSum = 0;
    for (const [, w] of entries) rowSum += w;
    let at = offsets[i]!;
    for (const [j, w] of entries) {
      neighbours[at] = j;
      // Row-standardised weights divide by the row sum; an isolate has no entries, so no 0/0.
      weights[at] = style === 'row' ? w / rowSum : w;
      at++;
    }
  }
  return Object.freeze({ ids: [...ids], offsets, neighbours, weights, style, isolates, description });
}

/**
 * Barn contact weights: `fence` (same row, shared divider, and rear fences), `rook` (fence plus
 * the pen facing across the alley), `queen` (rook plus the diagonals across the alley). Only
 * pairs where both pens are in `sampled` are kept: weights live among the sampled pens.
 *
 * @param layout the barn layout (contacts come from src/domain/layout.ts).
 * @param sampled ids of the sampled, in-use pens (order defines the index).
 * @throws RangeError when a sampled id is not a pen of the layout, or ids repeat.
 * @see Cliff A.D., Ord J.K. (1981) Spatial Processes: Models and Applications (rook/queen contiguity).
 */
export function contactWeights(
  layout: BarnLayout,
  sampled: readonly string[],
  convention: BarnConvention,
  style: WeightStyle,
): SpatialWeights {
  const index = checkIds(sampled);
  const pens = expandLayout(layout);
  const known = new Set(pens.map((pen) => pen.id));
  for (const id of sampled)
    if (!known.has(id)) throw new RangeError(`\`sampled\` must name pens of the layout, got ${id}`);
  const contacts = penContacts(layout, pens);
  const kinds =
    convention === 'fence'
      ? [contacts.fence]
      : convention === 'rook'
        ? [contacts.fence, contacts.facing]
        : [contacts.fence, contacts.facing, contacts.diagonal];
  const edges: [number, number][] = [];
  for (const pairs of kinds) {
    for (const [a, b] of pairs) {
      const i = index.get(a);
      const j = index.get(b);
      if (i !== undefined && j !== undefined) edges.push([i, j]);
    }
  }
  return weightsFromEdges(sampled, edges, style, `${convention} contacts among sampled pens, ${style}`);
}

/**
 * Explicit neighbour lists by id. A link listed in one direction only is made symmetric
 * (i~j when i lists j or j lists i), because join counts count undirected joins.
 *
 * @throws RangeError naming an unknown id.
 */
export function listWeights(
  ids: readonly string[],
  lists: Readonly<Record<string, readonly string[]>>,
  style: WeightStyle,
): SpatialWeights {
  const index = checkIds(ids);
  const edges: [number, number][] = [];
  for (const [from, tos] of Object.entries(lists)) {
    const i = index.get(from);
    if (i === undefined) throw new RangeError(`\`neighbours\` must name known pens, got ${from}`);
    for (const to of tos) {
      const j = index.get(to);
      if (j === undefined) throw new RangeError(`\`neighbours\` of ${from} must name known pens, got ${to}`);
      edges.push([i, j]);
    }
  }
  return weightsFromEdges(ids, edges, style, `explicit neighbour lists (symmetrised), ${style}`);
}

function checkPoints(points: readonly SpatialPoint[]): void {
  checkIds(points.map((p) => p.id));
  for (const p of points) {
    if (!Number.isFinite(p.x) || !Number.isFinite(p.y))
      throw new RangeError(`\`x, y\` of pen ${p.id} must be finite numbers, got ${p.x}, ${p.y}`);
  }
}

/**
 * k nearest sampled pens, symmetrised by union: i~j when j is among the k nearest of i or i
 * among the k nearest of j. Ties at the k-th distance are all included (within 1e-9 pen
 * units), so the result does not depend on the order of the pens; k is therefore a minimum.
 *
 * @param k integer in [1, n-1].
 * @throws RangeError on bad k or coordinates.
 */
export function knnWeights(points: readonly SpatialPoint[], k: number, style: WeightStyle): SpatialWeights {
  checkPoints(points);
  const n = points.length;
  if (!Number.isInteger(k) || k < 1 || k > Math.max(1, n - 1))
    throw new RangeError(`\`k\` must be an integer in [1, ${Math.max(1, n - 1)}], got ${k}`);
  const edges: [number, number][] = [];
  if (n < 2) return weightsFromEdges([points[0]!.id], edges, style, knnDescription(k, style));
  const row = new Float64Array(n);
  const sorted = new Float64Array(n - 1);
  for (let i = 0; i < n; i++) {
    for (let j = 0, at = 0; j < n; j++) {
      if (j === i) continue;
      row[j] = dist(points[i]!, points[j]!);
      sorted[at++] = row[j]!;
    }
    // The k-th smallest distance to the others, ties counted (a numeric sort of a typed array).
    sorted.sort();
    const kth = sorted[Math.min(k, n - 1) - 1]!;
    // Edges in any order: weightsFromEdges keeps one weight per pair and sorts each row.
    for (let j = 0; j < n; j++) if (j !== i && row[j]! <= kth + 1e-9) edges.push([i, j]);
  }
  return weightsFromEdges(
    points.map((p) => p.id),
    edges,
    style,
    knnDescription(k, style),
  );
}

function knnDescription(k: number, style: WeightStyle): string {
  return `${k} nearest sampled pens (symmetrised by union, ties included), ${style}`;
}

function dist(a: SpatialPoint, b: SpatialPoint): number {
  return Math.hypot(a.x - b.x, a.y - b.y);
}

/**
 * Distance band: i~j when 0 < d_ij <= band. With `power` the weight is d_ij^-power (inverse
 * distance decay); without it the band is binary.
 *
 * @param band distance in pen units, > 0.
 * @param power optional decay exponent >= 0 (0 means binary).
 * @throws RangeError on a bad band, power or coordinates.
 */
export function distanceBandWeights(
  points: readonly SpatialPoint[],
  band: number,
  style: WeightStyle,
  power = 0,
): SpatialWeights {
  checkPoints(points);
  if (!(Number.isFinite(band) && band > 0)) throw new RangeError(`\`band\` must be a finite number > 0, got ${band}`);
  if (!(Number.isFinite(power) && power >= 0))
    throw new RangeError(`\`power\` must be a finite number >= 0, got ${power}`);
  const edges: [number, number, number][] = [];
  for (let i = 0; i < points.length; i++) {
    for (let j = i + 1; j < points.length; j++) {
      const d = dist(points[i]!, points[j]!);
      // Coincident points (d = 0) get no weight: an inverse distance would be infinite.
      if (d > 0 && d <= band + 1e-9) edges.push([i, j, power === 0 ? 1 : d ** -power]);
    }
  }
  const kind = power === 0 ? 'binary band' : `inverse distance^${power}`;
  return weightsFromEdges(
    points.map((p) => p.id),
    edges,
    style,
    `distance band ${round(band)} pen units (${kind}), ${style}`,
  );
}

function round(x: number): number {
  return Math.round(x * 1000) / 1000;
}

/**
 * The default weights for pipeline use: the 2 nearest sampled pens, symmetrised by union, ties
 * included (knnWeights). Why: a systematic round hangs a rope every sixth pen on alternating
 * sides of the alley, so sampled pens almost never share a fence and contact weights would leave
 * every pen isolated. Two nearest ropes link each rope to the ropes before and after it along
 * the barn (a chain through a staggered sample, a ladder through ropes hung in facing pairs),
 * whatever the spacing and however many pens are empty; a single global distance band would
 * either cut a paired design into disconnected pairs or, set by the end pens, reach past the
 * next rope in the middle of the barn. With 2 pens, each is the other's neighbour.
 *
 * @throws RangeError for no pens or bad coordinates.
 * @see Cliff A.D., Ord J.K. (1981) Spatial Processes (nearest-neighbour weights for irregular units).
 */
export function defaultWeights(points: readonly SpatialPoint[], style: WeightStyle): SpatialWeights {
  checkPoints(points);
  if (points.length < 2)
    return weightsFromEdges(
      points.map((p) => p.id),
      [],
      style,
      'one pen, no neighbours',
    );
  const w = knnWeights(points, Math.min(2, points.length - 1), style);
  return Object.freeze({ ...w, description: `default: ${w.description}` });
}

/**
 * Typical rope spacing: the median over sampled pens of the distance to the second-nearest
 * sampled pen (the nearest when there are 2 pens), in pen units. Used as the default linking
 * distance for cluster listing, so that a cluster is a chain of neighbouring ropes: 1 for a
 * fully roped row, 3.35 for every sixth pen staggered across a 1.5-unit alley.
 * @throws RangeError for fewer than 2 pens or bad coordinates.
 */
export function ropeSpacing(points: readonly SpatialPoint[]): number {
  checkPoints(points);
  if (points.length < 2) throw new RangeError(`\`pens\` must be an integer in [2, Infinity), got ${points.length}`);
  const n = points.length;
  const values = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    // The two smallest distances from pen i to the others (ties kept): the second is the
    // second-nearest, the first the nearest (used when there are only 2 pens).
    let first = Infinity;
    let second = Infinity;
    for (let j = 0; j < n; j++) {
      if (j === i) continue;
      const d = dist(points[i]!, points[j]!);
      if (d < first) {
        second = first;
        first = d;
      } else if (d < second) second = d;
    }
    values[i] = n === 2 ? first : second;
  }
  values.sort();
  const mid = values.length >> 1;
  const median = values.length % 2 ? values[mid]! : (values[mid - 1]! + values[mid]!) / 2;
  return median > 0 ? median : 1;
}

/**
 * Weight constants (Cliff & Ord 1981): S0 = sum_ij w_ij; S1 = 1/2 sum_ij (w_ij + w_ji)^2;
 * S2 = sum_i (w_i. + w_.i)^2.
 * @see Cliff A.D., Ord J.K. (1981) Spatial Processes: Models and Applications, ch. 1-2.
 */
export function weightConstants(w: SpatialWeights): WeightConstants {
  return keptOfFrozen(constantsOfFrozen, w, () => Object.freeze(computeWeightConstants(w)));
}

/**
 * The constants of frozen weights (every builder here freezes what it returns), kept while the
 * weights live: weights handed out again for the same pens are not summed again.
 */
const constantsOfFrozen = new WeakMap<SpatialWeights, WeightConstants>();

function computeWeightConstants(w: SpatialWeights): WeightConstants {
  const n = w.ids.length;
  const rowSum = new Float64Array(n);
  const colSum = new Float64Array(n);
  const lookup = new Map<number, number>();
  let s0 = 0;
  for (let i = 0; i < n; i++) {
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) {
      const j = w.neighbours[a]!;
      const v = w.weights[a]!;
      s0 += v;
      rowSum[i]! += v;
      colSum[j]! += v;
      lookup.set(i * n + j, v);
    }
  }
  let s1 = 0;
  for (let i = 0; i < n; i++) {
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) {
      const j = w.neighbours[a]!;
      const sum = w.weights[a]! + (lookup.get(j * n + i) ?? 0);
      s1 += sum * sum;
      // An entry w_ij whose transpose is absent contributes its square a second time, from j's side.
      if (!lookup.has(j * n + i)) s1 += sum * sum;
    }
  }
  s1 /= 2;
  let s2 = 0;
  for (let i = 0; i < n; i++) s2 += (rowSum[i]! + colSum[i]!) ** 2;
  return { s0, s1, s2 };
}

/**
 * The weights among a subset of the pens (indices into `w.ids`), kept exactly as stored
 * (no re-standardisation), for per-barn blocks of site weights.
 * @throws RangeError on a bad or repeated index.
 */
export function subWeights(w: SpatialWeights, indices: readonly number[]): SpatialWeights {
  const n = w.ids.length;
  const local = new Map<number, number>();
  indices.forEach((i, k) => {
    if (!Number.isInteger(i) || i < 0 || i >= n || local.has(i))
      throw new RangeError(`\`indices\` must be distinct integers in [0, ${n - 1}], got ${i}`);
    local.set(i, k);
  });
  const rows: Map<number, number>[] = indices.map((i) => {
    const row = new Map<number, number>();
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) {
      const k = local.get(w.neighbours[a]!);
      if (k !== undefined) row.set(k, w.weights[a]!);
    }
    return row;
  });
  const packed = packRows(
    indices.map((i) => w.ids[i]!),
    rows,
    'binary',
    `${w.description} (subset)`,
  );
  return Object.freeze({ ...packed, style: w.style });
}

/** Dense copy of the weights (tests and the naive benchmark only). */
export function denseWeights(w: SpatialWeights): number[][] {
  const n = w.ids.length;
  const dense = Array.from({ length: n }, () => new Array<number>(n).fill(0));
  for (let i = 0; i < n; i++)
    for (let a = w.offsets[i]!; a < w.offsets[i + 1]!; a++) dense[i]![w.neighbours[a]!] = w.weights[a]!;
  return dense;
}
