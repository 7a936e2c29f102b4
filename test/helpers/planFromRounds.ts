/**
 * The next-round plan of a site's rounds as the outputs make it (spatial review, planner, then
 * the wording), for tests that start from hand-built rounds.
 */
import { type RoundConfidence, siteConfidence } from '../../src/analysis/confidence.js';
import { planNextRound } from '../../src/analysis/nextRound.js';
import type { PlanInput } from '../../src/analysis/planContext.js';
import { OutbreakCache, siteSpatial } from '../../src/analysis/spatialRound.js';
import type { Config, Site } from '../../src/config/types.js';
import { wordPlan } from '../../src/report/planWording.js';
import type { SiteRound } from '../../src/rounds/roundModel.js';

export interface PlanFromRoundsOptions extends Partial<Pick<PlanInput, 'budget' | 'measureOf'>> {
  today: string;
  /** The rounds' confidence when a test computed it itself (e.g. with the spread model). */
  confidence?: RoundConfidence[];
  cache?: OutbreakCache;
}

export function planFromRounds(config: Config, site: Site, rounds: SiteRound[], options: PlanFromRoundsOptions) {
  const { today, budget, measureOf } = options;
  const cache = options.cache ?? new OutbreakCache(config.analysis);
  const confidence = options.confidence ?? siteConfidence(site, rounds);
  const spatial = siteSpatial(site, rounds, confidence, config.analysis, cache);
  const plan = wordPlan(
    planNextRound({
      site,
      rounds,
      confidence,
      spatial,
      settings: config.analysis,
      cache,
      today,
      ...(budget === undefined ? {} : { budget }),
      ...(measureOf === undefined ? {} : { measureOf }),
    }),
  );
  return { plan, confidence, spatial, cache };
}
