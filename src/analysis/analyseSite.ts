/**
 * One site's analysis, from its inputs as a plain value (the store reader's `siteInputs`): its
 * rounds, each round's detection confidence, summary and spatial review, and the next round's
 * plan. Pure apart from the outbreak cache it is handed: no store, no files, no clock. It returns
 * numbers and coded notes (`SiteFindings`); the words come on the report side
 * (src/report/siteWording.ts turns findings into the `SiteAnalysis` the writers read).
 */
import type { Config, Site } from '../config/types.js';
import type { SiteInputs } from '../domain/store.js';
import { buildSiteRounds, type SiteRound } from '../rounds/roundModel.js';
import { siteConfidence, type RoundConfidence } from './confidence.js';
import { planNextRound } from './nextRound.js';
import type { NextRoundPlan, PlannedRound } from './planTypes.js';
import { summariseSite } from './roundSummary.js';
import { EARLIER_MAPS, LOOKBACK_ROUNDS, type RoundSummary, type SummaryFacts } from './summaryTypes.js';
import { planBasisIndex } from './planContext.js';
import { roundSpatial, type OutbreakCache, type RoundSpatial } from './spatialRound.js';

/**
 * What every build of a site's outputs needs, whichever rounds it writes: the rounds, their
 * confidence, the next round's plan, and the spatial review of the round the plan builds on.
 */
export interface SiteBasis {
  site: Site;
  rounds: SiteRound[];
  confidence: RoundConfidence[];
  /**
   * The spatial review of each round. A build that rewrites only some rounds reviews only those
   * and the rounds their pages look back on (`reviewRounds`); the others are left undefined.
   */
  spatial: (RoundSpatial | undefined)[];
  plan: PlannedRound;
}

/** One site's analysis as numbers and coded notes (kinds and their figures), no sentences. */
export interface SiteFindings extends SiteBasis {
  summaries: SummaryFacts[];
  /** The first round summarised with its pens: the rounds before it are outlines, never written. */
  detailFrom: number;
}

/** The findings with their notes worded: what the writers in src/report read. */
export interface SiteAnalysis extends Omit<SiteFindings, 'summaries' | 'plan'> {
  summaries: RoundSummary[];
  plan: NextRoundPlan;
}

/** What the analysis reads besides the site's inputs. */
export interface AnalysisContext {
  config: Config;
  /** The day the analysis is made (yyyy-mm-dd): rounds still open, plan due dates. */
  today: string;
  /** Outbreak spread models and rope set geometry kept for the build of one site (a new cache per site keeps memory to one site). */
  cache: OutbreakCache;
}

export interface AnalyseOptions {
  /** Passed to the plan as its `budget` (ropes the next round may use). */
  budget?: number;
}

/**
 * A site's rounds, their confidence and the next round's plan, with the spatial review only of
 * the round the plan builds on. The spatial review (permutation tests, the spread model) and the
 * pens' summaries are most of a round's cost: `completeFindings` adds them for the rounds a build
 * writes.
 */
export function analyseSiteBasis(
  site: Site,
  inputs: SiteInputs,
  context: AnalysisContext,
  options: AnalyseOptions = {},
): SiteBasis {
  const rounds = buildSiteRounds(
    site,
    inputs.ropes,
    inputs.results,
    inputs.plannedWithoutResults,
    { replaced: inputs.replaced, mistyped: inputs.mistyped },
    context.today,
  );
  return basisOfRounds(site, rounds, inputs.planned, context, options);
}

/**
 * `analyseSiteBasis` from rounds already built (some of them kept from an earlier build).
 * @param planned the site's planned ropes (SiteInputs.planned)
 */
export function basisOfRounds(
  site: Site,
  rounds: SiteRound[],
  planned: SiteInputs['planned'],
  context: AnalysisContext,
  options: AnalyseOptions = {},
): SiteBasis {
  const { config, today, cache } = context;
  const confidence = siteConfidence(site, rounds, { settings: config.analysis, outbreaks: cache });
  const spatial: (RoundSpatial | undefined)[] = new Array<RoundSpatial | undefined>(rounds.length).fill(undefined);
  const basis = { site, rounds, confidence, spatial };
  reviewRounds(basis, [planBasisIndex(rounds)], context);
  const lastNumber = rounds.at(-1)?.number ?? 0;
  const existingIds = new Map(
    planned
      .filter((rope) => rope.afterRound === lastNumber)
      .map((rope) => [`${rope.barnId}/${rope.penId}`, rope.sampleId] as const),
  );
  const plan = planNextRound({
    site,
    rounds,
    confidence,
    spatial,
    settings: config.analysis,
    cache,
    today,
    existingIds,
    measureOf: (assayId) => config.assayById.get(assayId)?.measure ?? 'ct',
    ...(options.budget !== undefined ? { budget: options.budget } : {}),
  });
  return { ...basis, plan };
}

/** Adds the spatial review of the rounds at `indices` (those out of range are ignored). */
export function reviewRounds(
  findings: Pick<SiteBasis, 'site' | 'rounds' | 'confidence' | 'spatial'>,
  indices: Iterable<number>,
  context: AnalysisContext,
): void {
  const { site, rounds, confidence, spatial } = findings;
  for (const index of indices) {
    if (index < 0 || index >= rounds.length || spatial[index] !== undefined) continue;
    spatial[index] = roundSpatial(site, rounds, index, confidence, context.config.analysis, context.cache);
  }
}

/**
 * The findings of the rounds from index `from` on, ready to be written: their summaries and
 * spatial reviews, and those of the rounds their pages look back on (LOOKBACK_ROUNDS); earlier
 * rounds are summarised in outline only.
 */
export function completeFindings(basis: SiteBasis, context: AnalysisContext, from = 0): SiteFindings {
  const detailFrom = Math.max(0, from - LOOKBACK_ROUNDS);
  const summaries = summariseSite(context.config, basis.site, basis.rounds, basis.confidence, detailFrom);
  const lookBack = Math.max(0, from - EARLIER_MAPS);
  reviewRounds(
    basis,
    Array.from({ length: Math.max(0, basis.rounds.length - lookBack) }, (_, offset) => lookBack + offset),
    context,
  );
  return { ...basis, summaries, detailFrom };
}

/** Builds a site's whole analysis from its inputs: every round summarised and reviewed. */
export function analyseSite(
  site: Site,
  inputs: SiteInputs,
  context: AnalysisContext,
  options: AnalyseOptions = {},
): SiteFindings {
  return completeFindings(analyseSiteBasis(site, inputs, context, options), context);
}
