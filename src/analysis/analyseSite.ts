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
import type { RoundSummary, SummaryFacts } from './summaryTypes.js';
import { siteSpatial, type OutbreakCache, type RoundSpatial } from './spatialRound.js';

/** One site's analysis as numbers and coded notes (kinds and their figures), no sentences. */
export interface SiteFindings {
  site: Site;
  rounds: SiteRound[];
  confidence: RoundConfidence[];
  summaries: SummaryFacts[];
  spatial: RoundSpatial[];
  plan: PlannedRound;
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
  /** Outbreak spread models shared by the sites of one run. */
  cache: OutbreakCache;
}

export interface AnalyseOptions {
  /** Passed to the plan as its `budget` (ropes the next round may use). */
  budget?: number;
}

/** Builds a site's analysis from its inputs. */
export function analyseSite(
  site: Site,
  inputs: SiteInputs,
  context: AnalysisContext,
  options: AnalyseOptions = {},
): SiteFindings {
  const { config, today, cache } = context;
  const rounds = buildSiteRounds(
    site,
    inputs.ropes,
    inputs.results,
    inputs.plannedWithoutResults,
    { replaced: inputs.replaced, mistyped: inputs.mistyped },
    today,
  );
  const confidence = siteConfidence(site, rounds, { settings: config.analysis, outbreaks: cache });
  const summaries = summariseSite(config, site, rounds, confidence);
  const spatial = siteSpatial(site, rounds, confidence, config.analysis, cache);
  const lastNumber = rounds.at(-1)?.number ?? 0;
  const existingIds = new Map(
    inputs.planned
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
  return { site, rounds, confidence, summaries, spatial, plan };
}
