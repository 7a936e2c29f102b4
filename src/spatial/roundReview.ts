/**
 * One call per barn-round or site-round: every spatial statistic of src/spatial on plain data,
 * returned as one JSON-serialisable report (the pipeline writes clusters.json / clusters.csv
 * from it).
 */
import { isInUse, type Pen } from '../domain/layout.js';
import { deriveSeed, seededRng } from '../util/random.js';
import { linkClusters } from './clusters.js';
import { localGiStar } from './getisOrd.js';
import { joinCountTest, type JoinCountTest } from './joinCount.js';
import { localJoinCounts } from './localJoinCount.js';
import { moranTest } from './moran.js';
import { GeometryCache, type ChosenWeights, type RopeSetGeometry, type SiteBlock } from './ropeSetGeometry.js';
import { bernoulliScan } from './scan.js';
import { summariseSpread, type SpreadPoint } from './spread.js';
import type { WeightStyle } from './weights.js';

import type {
  SpatialOptions,
  BarnRoundInput,
  BarnSpatialReport,
  SiteRoundInput,
  SiteSpatialReport,
} from './roundReviewTypes.js';

export type {
  RoundPen,
  WeightChoice,
  SpatialOptions,
  BarnRoundInput,
  PenReport,
  BarnSpatialReport,
  SiteRoundInput,
  SiteSpatialReport,
} from './roundReviewTypes.js';

/** A usable roped pen of the round with its barn coordinates. */
interface UsedPen {
  id: string;
  positive: boolean;
  resultClass: string | null;
  ct: number | null;
  load: number;
  x: number;
  y: number;
}

interface Prepared {
  input: BarnRoundInput;
  offset: { x: number; y: number };
  pens: readonly Pen[];
  used: UsedPen[];
  excluded: { id: string; reason: string }[];
  /** The points and weights of `used`, shared with every round and assay that roped the same pens. */
  geometry: RopeSetGeometry;
}

function prepare(input: BarnRoundInput, cache: GeometryCache): Prepared {
  const { pens, byId } = cache.layout(input.layout);
  const offset = input.offset ?? { x: 0, y: 0 };
  if (!Number.isFinite(offset.x) || !Number.isFinite(offset.y))
    throw new RangeError(`\`offset\` of barn ${input.barn} must be finite, got ${offset.x}, ${offset.y}`);
  const excluded: { id: string; reason: string }[] = [];
  const used: Prepared['used'] = [];
  const seen = new Set<string>();
  for (const s of input.sampled) {
    const pen = byId.get(s.id);
    if (!pen) throw new RangeError(`\`sampled\` must name pens of barn ${input.barn}, got ${s.id}`);
    if (seen.has(s.id))
      throw new RangeError(`\`sampled\` must list each pen once, got ${s.id} twice in barn ${input.barn}`);
    seen.add(s.id);
    if (!Number.isFinite(s.load) || s.load < 0)
      throw new RangeError(`\`load\` of pen ${s.id} must be a finite number >= 0, got ${s.load}`);
    if (!isInUse(pen)) excluded.push({ id: s.id, reason: `pen is ${pen.status}` });
    else if (s.resultClass === 'invalid')
      excluded.push({ id: s.id, reason: 'invalid result (retest), neither positive nor negative' });
    // Field by field: a spread copy of each pen costs more than the rest of the preparation.
    else
      used.push({
        id: s.id,
        positive: s.positive,
        resultClass: s.resultClass ?? null,
        ct: s.ct ?? null,
        load: s.load,
        x: pen.x,
        y: pen.y,
      });
  }
  for (const id of input.earlierPositive ?? [])
    if (!byId.has(id)) throw new RangeError(`\`earlierPositive\` must name pens of barn ${input.barn}, got ${id}`);
  const geometry = cache.ropeSet(
    input.layout,
    used.map((u) => u.id),
  );
  return { input, offset, pens, used, excluded, geometry };
}

/** The weights of the options' choice among the usable ropes, in `style`. */
function weightsOf(p: Prepared, options: SpatialOptions, style: WeightStyle): ChosenWeights {
  return p.geometry.weights(options.weights ?? { kind: 'default' }, style);
}

function checkOptions(o: SpatialOptions): void {
  if (!Number.isInteger(o.seed)) throw new RangeError(`\`seed\` must be an integer, got ${o.seed}`);
}

/** Where the round's positives lie: clusters of neighbouring ropes, and spread from earlier positives. */
function clustersAndSpread(
  p: Prepared,
  options: SpatialOptions,
): Pick<BarnSpatialReport, 'clusters' | 'clusterLinkDistance' | 'spread'> {
  const { input } = p;
  const earlier = new Set(input.earlierPositive ?? []);
  // A cluster is a chain of neighbouring ropes; "adjacent" spread reaches at least the next rope,
  // since the pens between two ropes were not sampled (see summariseSpread for the 2.5 floor).
  const spacing = p.used.length >= 2 ? p.geometry.spacing() : 1;
  const linkDistance = options.clusterLinkDistance ?? spacing;
  const adjacentDistance = options.adjacentDistance ?? Math.max(2.5, spacing);
  const positives = p.used.filter((u) => u.positive);
  const clusters = linkClusters(
    positives.map((u) => ({ id: u.id, x: u.x, y: u.y, ct: u.ct })),
    linkDistance,
    earlier,
  );
  const spread = summariseSpread(
    positives.map((u) => ({ id: u.id, x: u.x, y: u.y, barn: input.barn })),
    p.pens.filter((pen) => earlier.has(pen.id)).map((pen) => ({ id: pen.id, x: pen.x, y: pen.y, barn: input.barn })),
    adjacentDistance,
  );
  return { clusters, clusterLinkDistance: linkDistance, spread };
}

/** The statistics over the weights among the usable ropes (at least 2): join counts, Moran's I, the scan, and Gi* and local join counts per pen. */
function weightedStatistics(
  p: Prepared,
  options: SpatialOptions,
  seed: number,
  notes: string[],
): Pick<BarnSpatialReport, 'weights' | 'joinCount' | 'moran' | 'scan' | 'pens'> {
  const permutations = options.permutations ?? 999;
  const style = options.style ?? 'binary';
  const positive = p.used.map((u) => u.positive);
  const loads = p.used.map((u) => u.load);
  const earlier = new Set(p.input.earlierPositive ?? []);
  const { w, band } = weightsOf(p, options, style);
  if (w.isolates.length > 0)
    notes.push(
      `${w.isolates.length} pen(s) have no neighbour under these weights and add no joins: ${w.isolates.join(', ')}`,
    );
  const joinCount = joinCountTest(w, positive, {
    rng: seededRng(deriveSeed(seed, 'join-count')),
    permutations,
    exactLimit: options.exactLimit ?? 1e6,
  });
  const moran = moranTest(w, loads, { rng: seededRng(deriveSeed(seed, 'moran')), permutations });
  const scan = bernoulliScan(p.geometry.points, positive, {
    rng: seededRng(deriveSeed(seed, 'scan')),
    permutations,
    ...(options.scan ?? {}),
  });
  const gi = localGiStar(w, loads);
  const local = new Map(localJoinCounts(w, positive).map((l) => [l.id, l]));
  const pens = p.used.map((u, i) => ({
    id: u.id,
    x: u.x,
    y: u.y,
    positive: u.positive,
    resultClass: u.resultClass,
    ct: u.ct,
    load: u.load,
    neighbours: w.offsets[i + 1]! - w.offsets[i]!,
    giStar: gi[i]!.z,
    localBB: local.get(u.id)?.bb ?? null,
    localP: local.get(u.id)?.p ?? null,
    newPositive: u.positive && !earlier.has(u.id),
  }));
  return {
    weights: { description: w.description, style: w.style, isolates: [...w.isolates], band },
    joinCount,
    moran,
    scan,
    pens,
  };
}

function analysePrepared(p: Prepared, options: SpatialOptions, seed: number): BarnSpatialReport {
  const notes: string[] = [];
  const n = p.used.length;
  const style = options.style ?? 'binary';
  const none = {
    weights: { description: 'none (fewer than 2 usable pens)', style, isolates: [], band: null },
    joinCount: null,
    moran: null,
    scan: null,
    pens: [],
  };
  const statistics = n >= 2 ? weightedStatistics(p, options, seed, notes) : none;
  if (n < 2) notes.push('fewer than 2 usable sampled pens: no spatial statistics');
  // The detection of the ropes hung under contagious spread needs the site's spread model
  // (src/analysis/spatialRound.ts fills `detection`); the review itself runs none, and says so.
  notes.push('spread-model detection not requested');
  const { clusters, clusterLinkDistance, spread } = clustersAndSpread(p, options);
  return {
    barn: p.input.barn,
    seed,
    n,
    positives: p.used.filter((u) => u.positive).length,
    weights: statistics.weights,
    excluded: p.excluded,
    joinCount: statistics.joinCount,
    moran: statistics.moran,
    pens: statistics.pens,
    scan: statistics.scan,
    clusters,
    clusterLinkDistance,
    spread,
    detection: null,
    notes,
  };
}

/**
 * Spatial analysis of one barn-round: join counts, Moran's I on load, local join counts and
 * Gi* per pen, the Bernoulli scan, cluster listing and spread against earlier rounds (the
 * detection of the ropes hung under contagious spread is left null: it needs the site's spread
 * model, which src/analysis/spatialRound.ts supplies). Empty and
 * out-of-use pens, and invalid results, are left out and listed in `excluded`.
 * Every Monte Carlo part uses a seed derived from `options.seed` and the barn id. `geometry`
 * keeps the rope sets' geometry between calls, as in analyseSiteRound.
 *
 * @throws RangeError on pens not in the layout, duplicate pens, bad loads or bad options.
 * @see Cliff & Ord 1981; Moran 1950; Ord & Getis 1995; Kulldorff 1997 (see each module).
 */
export function analyseBarnRound(
  input: BarnRoundInput & { options: SpatialOptions; geometry?: GeometryCache },
): BarnSpatialReport {
  checkOptions(input.options);
  const seed = deriveSeed(input.options.seed, 'barn', input.barn);
  return analysePrepared(prepare(input, input.geometry ?? new GeometryCache()), input.options, seed);
}

/**
 * Spatial analysis of a site-round: each barn as in analyseBarnRound, plus a site join count
 * with barns as separate blocks and positives permuted within barns (stratified; permuting
 * across barns would read a difference in prevalence between barns as clustering), and the
 * spread summary with distances across barns through their site offsets.
 *
 * @throws RangeError on duplicate barn ids or any error of analyseBarnRound.
 * @see Cliff A.D., Ord J.K. (1981) Spatial Processes (join counts) (permutation inference; stratifying within barns is common practice, no source).
 */
export function analyseSiteRound(input: SiteRoundInput): SiteSpatialReport {
  checkOptions(input.options);
  const barnIds = new Set<string>();
  for (const b of input.barns) {
    if (barnIds.has(b.barn)) throw new RangeError(`\`barns\` must have unique ids, got ${b.barn} twice`);
    barnIds.add(b.barn);
  }
  const cache = input.geometry ?? new GeometryCache();
  const prepared = input.barns.map((barn) => prepare(barn, cache));
  const barns = prepared.map((p) =>
    analysePrepared(p, input.options, deriveSeed(input.options.seed, 'barn', p.input.barn)),
  );
  const notes: string[] = [];
  const blocks: SiteBlock[] = [];
  const positive: boolean[] = [];
  prepared.forEach((p, s) => {
    if (p.used.length < 2) return;
    blocks.push({ barn: p.input.barn, stratum: s, geometry: p.geometry });
    for (const u of p.used) positive.push(u.positive);
  });
  let joinCount: JoinCountTest | null = null;
  if (positive.length >= 2) {
    const style = input.options.style ?? 'binary';
    const { w, strata } = cache.siteWeights(blocks, input.options.weights ?? { kind: 'default' }, style);
    joinCount = joinCountTest(w, positive, {
      rng: seededRng(deriveSeed(input.options.seed, 'site', input.site, 'join-count')),
      permutations: input.options.permutations ?? 999,
      exactLimit: input.options.exactLimit ?? 1e6,
      strata,
    });
  } else notes.push('fewer than 2 usable sampled pens on the site: no site join count');
  const current: SpreadPoint[] = [];
  const earlier: SpreadPoint[] = [];
  for (const p of prepared) {
    for (const u of p.used)
      if (u.positive) current.push({ id: u.id, x: u.x + p.offset.x, y: u.y + p.offset.y, barn: p.input.barn });
    const set = new Set(p.input.earlierPositive ?? []);
    for (const pen of p.pens)
      if (set.has(pen.id))
        earlier.push({ id: pen.id, x: pen.x + p.offset.x, y: pen.y + p.offset.y, barn: p.input.barn });
  }
  // Same default as per barn: at least the next rope, taking the widest rope spacing of the site.
  const spacings = prepared.filter((p) => p.used.length >= 2).map((p) => p.geometry.spacing());
  const spread = summariseSpread(current, earlier, input.options.adjacentDistance ?? Math.max(2.5, ...spacings));
  return { site: input.site, seed: input.options.seed, barns, joinCount, spread, notes };
}
