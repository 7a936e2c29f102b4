/**
 * Cluster listing: groups of positive pens that lie close together, as a vet reads them off
 * the barn map.
 */

export interface ClusterPen {
  id: string;
  x: number;
  y: number;
  /** Ct of the positive rope; null when the lab gave none (e.g. a positive call without Ct). */
  ct: number | null;
}

export interface PenCluster {
  /** 1-based, in order of the cluster's first pen (by x, then y). */
  index: number;
  pens: string[];
  size: number;
  extent: { minX: number; maxX: number; minY: number; maxY: number };
  /** Length along the alley, maxX - minX (0 for a single pen). */
  alleyLength: number;
  meanCt: number | null;
  minCt: number | null;
  /** Pens positive this round that were not positive in any earlier round. */
  newPens: string[];
  /** Pens positive this round that were positive in an earlier round. */
  earlierPositivePens: string[];
}

/**
 * Single-linkage clustering of positive pens: two positive pens belong to the same cluster
 * when a chain of positive pens links them with every step at most `linkDistance` pen units.
 * Computed with union-find over all pairs (a barn has at most a few hundred positive pens).
 *
 * @param positives positive pens of the round with coordinates (pen units) and Ct.
 * @param linkDistance > 0, pen units (e.g. the weights' band, so a cluster is a chain of neighbours).
 * @param earlierPositive ids positive in earlier rounds.
 * @throws RangeError on a bad distance, duplicate ids or non-finite coordinates.
 * @see Gower J.C., Ross G.J.S. (1969) Minimum spanning trees and single linkage cluster analysis,
 *   Applied Statistics 18:54-64.
 */
export function linkClusters(
  positives: readonly ClusterPen[],
  linkDistance: number,
  earlierPositive: ReadonlySet<string> = new Set(),
): PenCluster[] {
  if (!(Number.isFinite(linkDistance) && linkDistance > 0))
    throw new RangeError(`\`linkDistance\` must be a finite number > 0, got ${linkDistance}`);
  const seen = new Set<string>();
  for (const p of positives) {
    if (seen.has(p.id)) throw new RangeError(`\`positives\` must have unique ids, got ${p.id} twice`);
    seen.add(p.id);
    if (!Number.isFinite(p.x) || !Number.isFinite(p.y))
      throw new RangeError(`\`x, y\` of pen ${p.id} must be finite numbers, got ${p.x}, ${p.y}`);
  }
  const n = positives.length;
  const parent = Int32Array.from({ length: n }, (_, i) => i);
  const find = (i: number): number => {
    while (parent[i] !== i) {
      parent[i] = parent[parent[i]!]!;
      i = parent[i]!;
    }
    return i;
  };
  for (let i = 0; i < n; i++) {
    for (let j = i + 1; j < n; j++) {
      const a = positives[i]!;
      const b = positives[j]!;
      if (Math.hypot(a.x - b.x, a.y - b.y) <= linkDistance + 1e-9) {
        const ri = find(i);
        const rj = find(j);
        if (ri !== rj) parent[Math.max(ri, rj)] = Math.min(ri, rj);
      }
    }
  }
  const groups = new Map<number, ClusterPen[]>();
  for (let i = 0; i < n; i++) {
    const r = find(i);
    if (!groups.has(r)) groups.set(r, []);
    groups.get(r)!.push(positives[i]!);
  }
  const byPlace = (a: ClusterPen, b: ClusterPen) => a.x - b.x || a.y - b.y || (a.id < b.id ? -1 : 1);
  const clusters = [...groups.values()].map((pens) => pens.sort(byPlace));
  clusters.sort((a, b) => byPlace(a[0]!, b[0]!));
  return clusters.map((pens, k) => {
    const cts = pens.map((p) => p.ct).filter((c): c is number => c !== null && Number.isFinite(c));
    const xs = pens.map((p) => p.x);
    const ys = pens.map((p) => p.y);
    const extent = { minX: Math.min(...xs), maxX: Math.max(...xs), minY: Math.min(...ys), maxY: Math.max(...ys) };
    return {
      index: k + 1,
      pens: pens.map((p) => p.id),
      size: pens.length,
      extent,
      alleyLength: extent.maxX - extent.minX,
      meanCt: cts.length > 0 ? cts.reduce((s, c) => s + c, 0) / cts.length : null,
      minCt: cts.length > 0 ? Math.min(...cts) : null,
      newPens: pens.filter((p) => !earlierPositive.has(p.id)).map((p) => p.id),
      earlierPositivePens: pens.filter((p) => earlierPositive.has(p.id)).map((p) => p.id),
    };
  });
}
