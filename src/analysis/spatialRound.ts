/**
 * Spatial analysis of every round of a site, per assay: the statistics of src/spatial on the
 * round model, with the spread-model detection of the ropes actually hung beside the
 * hypergeometric value, and alerts in plain words. Pure apart from the outbreak cache, which
 * only saves recomputing the same seeded simulation.
 */
import type { AnalysisSettings, Barn, Measure, Site } from '../config/types.js';
import type { SiteRound } from '../rounds/roundModel.js';
import {
  analyseSiteRound,
  compareWithRandomPlacement,
  contactWeights,
  simulateOutbreaks,
  GeometryCache,
  type BarnSpatialReport,
  type Outbreaks,
  type SiteSpatialReport,
} from '../spatial/index.js';
import { deriveSeed, seededRng } from '../util/random.js';
import { designInfectedFor, ropeAccuracy, type RoundConfidence } from './confidence.js';
import { formatJoinCountP, formatPValue } from '../util/format.js';
import { inUsePens, isInUse } from '../domain/layout.js';
import { keptFor } from '../util/kept.js';

export const CLUSTERS_SCHEMA = 'ropewatch.clusters/1';

export interface SpatialAlert {
  kind: 'significant-cluster' | 'spread' | 'new-focus' | 'scattered-positives';
  barnId: string | null;
  assayId: string;
  message: string;
}

/** The S/P ratios of a cluster of antibody-positive pens (the spatial report gives Ct summaries only). */
export interface ClusterSp {
  barnId: string;
  cluster: number;
  meanSp: number | null;
  maxSp: number | null;
}

export interface AssaySpatial {
  assayId: string;
  /**
   * `sp-ratio`: the statistics are of antibody positives, Moran's I and Gi* of the S/P ratio
   * (clipped at 0); the report's Ct fields are empty and the S/P values are below.
   */
  measure: Measure;
  /** S/P of each sampled pen, `barn/pen` to S/P (antibody assays; empty for Ct). */
  spByPen: Record<string, number | null>;
  /** Per cluster of an antibody assay, its mean and highest S/P (empty for Ct). */
  clusterSp: ClusterSp[];
  report: SiteSpatialReport;
  alerts: SpatialAlert[];
  /** Per barn: the hypergeometric detection confidence beside the spread-model one. */
  detection: {
    barnId: string;
    hypergeometric: number;
    spreadModel: number | null;
    spreadModelSE: number | null;
    randomRopes: number | null;
  }[];
}

export interface RoundSpatial {
  schema: typeof CLUSTERS_SCHEMA;
  site: string;
  round: { number: number; id: string; startOn: string };
  seed: number;
  assays: AssaySpatial[];
  model: { transmission: number; background: number; realisations: number; contacts: 'queen' };
}

/** Simulated outbreaks per barn and design, reused across rounds and assays (same seed, same result). */
export class OutbreakCache {
  private readonly cache = new Map<string, Outbreaks>();
  /** The geometry of the rope sets the rounds and assays review, each made once (as long as this cache lives). */
  readonly geometry = new GeometryCache();
  constructor(private readonly settings: AnalysisSettings) {}

  /** The seed of a barn's simulated outbreaks with `infected` pens (written into the outputs). */
  seedFor(site: Site, barn: Barn, infected: number): number {
    return deriveSeed(this.settings.seed, 'outbreaks', site.id, barn.id, infected);
  }

  outbreaksFor(site: Site, barn: Barn, infected: number): Outbreaks | null {
    const key = `${site.id}/${barn.id}/${infected}`;
    let outbreaks = this.cache.get(key);
    if (!outbreaks) {
      const inUse = inUsePens(barn.pens).map((pen) => pen.id);
      if (infected < 1 || infected > inUse.length) return null;
      outbreaks = simulateOutbreaks(contactWeights(barn.layout, inUse, 'queen', 'binary'), {
        infected,
        beta: this.settings.spreadTransmission,
        background: this.settings.spreadBackground,
        realisations: this.settings.spreadRealisations,
        rng: seededRng(this.seedFor(site, barn, infected)),
      });
      this.cache.set(key, outbreaks);
    }
    return outbreaks;
  }
}

function barnAlerts(report: BarnSpatialReport, assayId: string, alpha: number): SpatialAlert[] {
  const alerts: SpatialAlert[] = [];
  const jc = report.joinCount;
  const scan = report.scan?.mostLikely ?? null;
  if (report.positives >= 2 && jc && jc.pPermutation <= alpha) {
    alerts.push({
      kind: 'significant-cluster',
      barnId: report.barn,
      assayId,
      message:
        `${assayId} positives in barn ${report.barn} sit next to each other more than chance allows: ${jc.bb} positive-positive joins against ` +
        `${jc.expectedBB.toFixed(2)} expected, ${formatJoinCountP(jc.inference.method, jc.pPermutation)}` +
        (jc.zBB !== null ? ` (z = ${jc.zBB.toFixed(2)}, shown for reference; the decision rests on the p-value)` : ''),
    });
  } else if (report.positives >= 2 && scan && scan.p <= alpha) {
    alerts.push({
      kind: 'significant-cluster',
      barnId: report.barn,
      assayId,
      message: `${assayId}: the scan statistic finds a cluster of ${scan.pens.length} ropes in barn ${report.barn} (${scan.pens.join(', ')}), p = ${formatPValue(scan.p)}`,
    });
  } else if (report.positives >= 2) {
    alerts.push({
      kind: 'scattered-positives',
      barnId: report.barn,
      assayId,
      message: `${assayId}: ${report.positives} positive ropes in barn ${report.barn} without significant clustering (join-count p = ${jc ? formatPValue(jc.pPermutation) : 'n/a'}): consider introduction by people, feed or transport, or false positives`,
    });
  }
  const spread = report.spread;
  if (spread.pattern === 'adjacent-spread') {
    alerts.push({
      kind: 'spread',
      barnId: report.barn,
      assayId,
      message: `${assayId} in barn ${report.barn}: ${spread.explanation}`,
    });
  } else if (spread.pattern === 'distant-new-focus') {
    alerts.push({
      kind: 'new-focus',
      barnId: report.barn,
      assayId,
      message: `${assayId} in barn ${report.barn}: ${spread.explanation}`,
    });
  }
  return alerts;
}

/** What the spatial step of one round reads. */
interface RoundContext {
  site: Site;
  rounds: readonly SiteRound[];
  index: number;
  confidence: readonly RoundConfidence[];
  settings: AnalysisSettings;
  cache: OutbreakCache;
  seed: number;
}

/** By site history, barn and assay: each pen ever positive, with the index of its first positive round. */
const FIRST_POSITIVE = new WeakMap<readonly SiteRound[], Map<string, Map<string, number>>>();

/**
 * The pens of a barn positive for the assay in any round, with the index of the first such round,
 * in the order they first turned positive: found once per history, not once per round reviewed
 * (every reviewed round looks back on all those before it).
 */
function firstPositiveRounds(rounds: readonly SiteRound[], barnId: string, assayId: string): Map<string, number> {
  const byBarnAssay = keptFor(FIRST_POSITIVE, rounds, () => new Map<string, Map<string, number>>());
  return keptFor(byBarnAssay, `${barnId}\u0000${assayId}`, () => {
    const first = new Map<string, number>();
    rounds.forEach((round, index) => {
      for (const pen of round.barns.find((b) => b.barnId === barnId)?.byAssay[assayId]?.positivePens ?? [])
        if (!first.has(pen)) first.set(pen, index);
    });
    return first;
  });
}

/** Each barn's sampled in-use pens with a result for the assay, and the pens positive in earlier rounds; S/P values collected on the way. */
function barnInputs(ctx: RoundContext, assayId: string, measure: Measure, spByPen: Record<string, number | null>) {
  const { site, rounds, index } = ctx;
  return rounds[index]!.barns.map((barnRound) => {
    const barn = site.barnById.get(barnRound.barnId.toUpperCase())!;
    const earlier: string[] = [];
    for (const [pen, first] of firstPositiveRounds(rounds, barn.id, assayId)) if (first < index) earlier.push(pen);
    const sampled = barnRound.pens
      .filter((pen) => pen.results[assayId] !== undefined && isInUse(barn.penById.get(pen.penId.toUpperCase())))
      .map((pen) => {
        const result = pen.results[assayId]!;
        if (measure === 'sp-ratio') spByPen[`${barn.id}/${pen.penId}`] = result.sp;
        // The load of an S/P result is max(0, S/P): Moran's I and Gi* then read antibody level.
        return {
          id: pen.penId,
          positive: result.resultClass === 'positive',
          resultClass: result.resultClass,
          ct: result.ct,
          load: result.load,
        };
      });
    return { barn: barn.id, layout: barn.layout, offset: barn.position, sampled, earlierPositive: earlier };
  });
}

/**
 * The spread-model detection of the ropes hung in one barn, beside the hypergeometric value and
 * random ropes; written into the barn's report as well (the round review leaves it to this step).
 */
function barnDetection(
  ctx: RoundContext,
  assayId: string,
  barnReport: BarnSpatialReport,
): AssaySpatial['detection'][number] {
  const { site, settings, cache } = ctx;
  const barn = site.barnById.get(barnReport.barn.toUpperCase())!;
  const hypergeometric =
    ctx.confidence[ctx.index]!.barns.find((entry) => entry.barnId === barn.id && entry.assayId === assayId)
      ?.detectionConfidence ?? 0;
  const pensInUse = inUsePens(barn.pens).length;
  const infected = designInfectedFor(site.program, pensInUse);
  const outbreaks = cache.outbreaksFor(site, barn, infected);
  // Invalid results prove nothing: only pens with a valid result count as ropes that looked.
  const ropes = barnReport.pens.map((pen) => pen.id);
  if (!outbreaks || ropes.length === 0)
    return { barnId: barn.id, hypergeometric, spreadModel: null, spreadModelSE: null, randomRopes: null };
  const se = ropeAccuracy(site.program, assayId, barn).sensitivity;
  const comparison = compareWithRandomPlacement(
    outbreaks,
    ropes,
    se,
    seededRng(deriveSeed(ctx.seed, assayId, barn.id, 'random-ropes')),
  );
  barnReport.detection = {
    ...comparison,
    se,
    infected,
    beta: settings.spreadTransmission,
    background: settings.spreadBackground,
    inUsePens: pensInUse,
    reseeded: outbreaks.reseeded,
    seed: deriveSeed(settings.seed, 'outbreaks', site.id, barn.id, infected),
  };
  return {
    barnId: barn.id,
    hypergeometric,
    spreadModel: comparison.actual.p,
    spreadModelSE: comparison.actual.standardError,
    randomRopes: comparison.random.p,
  };
}

/** The S/P ratios of each cluster of antibody-positive pens. */
function clusterSpOf(report: SiteSpatialReport, spByPen: Record<string, number | null>): ClusterSp[] {
  return report.barns.flatMap((barnReport) =>
    barnReport.clusters.map((cluster): ClusterSp => {
      const values = cluster.pens
        .map((pen) => spByPen[`${barnReport.barn}/${pen}`])
        .filter((sp): sp is number => sp !== null && sp !== undefined);
      return {
        barnId: barnReport.barn,
        cluster: cluster.index,
        meanSp: values.length > 0 ? values.reduce((sum, sp) => sum + sp, 0) / values.length : null,
        maxSp: values.length > 0 ? Math.max(...values) : null,
      };
    }),
  );
}

/** The spatial analysis of one assay in one round. */
function assaySpatial(ctx: RoundContext, assayId: string): AssaySpatial {
  const { site, settings } = ctx;
  const measure = ctx.rounds[ctx.index]!.measures[assayId] ?? 'ct';
  const spByPen: Record<string, number | null> = {};
  const report = analyseSiteRound({
    site: site.id,
    barns: barnInputs(ctx, assayId, measure, spByPen),
    options: { seed: deriveSeed(ctx.seed, assayId), permutations: settings.permutations },
    geometry: ctx.cache.geometry,
  });
  const detection = report.barns.map((barnReport) => barnDetection(ctx, assayId, barnReport));
  const alerts = report.barns
    .flatMap((barnReport) => barnAlerts(barnReport, assayId, settings.alpha))
    .map((alert) =>
      measure === 'sp-ratio'
        ? { ...alert, message: `${alert.message} (antibody positives: exposure, not necessarily current infection)` }
        : alert,
    );
  const clusterSp = measure === 'sp-ratio' ? clusterSpOf(report, spByPen) : [];
  return { assayId, measure, spByPen, clusterSp, report, alerts, detection };
}

/**
 * Spatial analysis of round `index` of a site, per assay tested in it. Reads the rounds before it
 * (pens positive earlier) and none after: a round's review does not change when later rounds come.
 * @param confidence the round confidence from siteConfidence (for the hypergeometric value beside)
 */
export function roundSpatial(
  site: Site,
  rounds: readonly SiteRound[],
  index: number,
  confidence: readonly RoundConfidence[],
  settings: AnalysisSettings,
  cache: OutbreakCache,
): RoundSpatial {
  const round = rounds[index]!;
  const seed = deriveSeed(settings.seed, site.id, round.number);
  const ctx: RoundContext = { site, rounds, index, confidence, settings, cache, seed };
  return {
    schema: CLUSTERS_SCHEMA,
    site: site.id,
    round: { number: round.number, id: round.id, startOn: round.startOn },
    seed,
    assays: round.assays.map((assayId) => assaySpatial(ctx, assayId)),
    model: {
      transmission: settings.spreadTransmission,
      background: settings.spreadBackground,
      realisations: settings.spreadRealisations,
      contacts: 'queen',
    },
  };
}

/**
 * Spatial analysis of each round of a site, per assay tested in that round.
 * @param confidence the round confidence from siteConfidence (for the hypergeometric value beside)
 */
export function siteSpatial(
  site: Site,
  rounds: readonly SiteRound[],
  confidence: readonly RoundConfidence[],
  settings: AnalysisSettings,
  cache: OutbreakCache,
): RoundSpatial[] {
  return rounds.map((_, index) => roundSpatial(site, rounds, index, confidence, settings, cache));
}
