/** One site's analysis as a plain value: what the writers in src/report read, apart from the code that builds it (src/outputs.ts). */
import type { Site } from '../config/types.js';
import type { SiteRound } from '../rounds/roundModel.js';
import type { RoundConfidence } from './confidence.js';
import type { NextRoundPlan } from './planTypes.js';
import type { RoundSummary } from './roundSummary.js';
import type { RoundSpatial } from './spatialRound.js';

export interface SiteAnalysis {
  site: Site;
  rounds: SiteRound[];
  confidence: RoundConfidence[];
  summaries: RoundSummary[];
  spatial: RoundSpatial[];
  plan: NextRoundPlan;
}
