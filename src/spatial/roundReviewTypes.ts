/**
 * The round review's inputs, options and report as plain values: the types apart from the code
 * (roundReview.ts), so that readers of a report need not import the statistics.
 */
import type { BarnLayout } from '../domain/layout.js';
import type { PenCluster } from './clusters.js';
import type { GeometryCache } from './ropeSetGeometry.js';
import type { JoinCountTest } from './joinCount.js';
import type { MoranResult } from './moran.js';
import type { ScanResult } from './scan.js';
import type { SpreadSummary } from './spread.js';
import type { PlacementComparison } from './spreadDetection.js';
import type { WeightChoice, WeightStyle } from './weights.js';

/** One roped pen of the round, as interpreted. */
export interface RoundPen {
  id: string;
  /** Positive rope (the interpreted call). */
  positive: boolean;
  /** Result class from interpretation, carried into the report; 'invalid' pens are left out of the statistics. */
  resultClass?: string;
  /** Ct of the rope; null or absent when not detected or not reported. */
  ct?: number | null;
  /** Load score max(0, cycle limit - Ct) for detected, 0 otherwise (computed by the caller). */
  load: number;
}

export type { WeightChoice } from './weights.js';

export interface SpatialOptions {
  /** Seed for every Monte Carlo part; written into the report. */
  seed: number;
  /** Monte Carlo permutations (join count, Moran, scan); default 999. */
  permutations?: number;
  /** Weights among the sampled pens; default: 2 nearest ropes, symmetrised (see defaultWeights). */
  weights?: WeightChoice;
  style?: WeightStyle;
  /** Exact enumeration limit for join-count p-values; default 1e6. */
  exactLimit?: number;
  scan?: { maxFraction?: number; maxRadius?: number; maxSecondary?: number };
  /** Single-linkage distance for cluster listing, pen units; default the rope spacing (see ropeSpacing). */
  clusterLinkDistance?: number;
  /** Threshold between adjacent spread and a distant new focus, pen units; default max(2.5, rope spacing). */
  adjacentDistance?: number;
}

export interface BarnRoundInput {
  barn: string;
  layout: BarnLayout;
  /** Barn position on the site, pen units; default {0, 0}. */
  offset?: { x: number; y: number };
  /** Pens roped this round. */
  sampled: RoundPen[];
  /** Pens positive in earlier rounds (ids in this barn). */
  earlierPositive?: string[];
}

export interface PenReport {
  id: string;
  /** Barn coordinates, pen units. */
  x: number;
  y: number;
  positive: boolean;
  resultClass: string | null;
  ct: number | null;
  load: number;
  neighbours: number;
  giStar: number | null;
  /** Local join count (positive pens only; null otherwise). */
  localBB: number | null;
  localP: number | null;
  newPositive: boolean;
}

export interface BarnSpatialReport {
  barn: string;
  seed: number;
  n: number;
  positives: number;
  weights: { description: string; style: string; isolates: string[]; band: number | null };
  excluded: { id: string; reason: string }[];
  joinCount: JoinCountTest | null;
  moran: MoranResult | null;
  pens: PenReport[];
  scan: ScanResult | null;
  clusters: PenCluster[];
  clusterLinkDistance: number;
  spread: SpreadSummary;
  detection:
    | (PlacementComparison & {
        se: number;
        infected: number;
        beta: number;
        background: number;
        inUsePens: number;
        reseeded: number;
        seed: number;
      })
    | null;
  notes: string[];
}

export interface SiteRoundInput {
  site: string;
  barns: BarnRoundInput[];
  options: SpatialOptions;
  /**
   * Where the geometry of the rope sets is kept between calls (one site's rounds and assays);
   * without it each call makes its own. The results are the same either way.
   */
  geometry?: GeometryCache;
}

export interface SiteSpatialReport {
  site: string;
  seed: number;
  barns: BarnSpatialReport[];
  /** Join count over the site, barns as separate blocks, positives permuted within barns. */
  joinCount: JoinCountTest | null;
  /** Spread across the site: distances to earlier positives in any barn via the offsets. */
  spread: SpreadSummary;
  notes: string[];
}
