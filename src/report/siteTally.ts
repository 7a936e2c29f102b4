/**
 * A round's counts over the whole site, summed over its barns: the ropes hung and returned, and
 * per assay the pens in use and the results by class. The pages, the herd status and summary.csv
 * read the same sums from here.
 */
import type { RoundSummary } from '../analysis/roundSummary.js';

/** The ropes of the whole site this round. */
export interface SiteRopes {
  hung: number;
  returned: number;
}

/** One assay's counts over the site. */
export interface SiteTally extends SiteRopes {
  /** Pens in use; an empty barn (between two groups of pigs) holds none that round. */
  pens: number;
  tested: number;
  positive: number;
  suspect: number;
  negative: number;
  invalid: number;
}

/** Ropes hung and returned over every barn of the round. */
export function siteRopes(summary: Pick<RoundSummary, 'barns'>): SiteRopes {
  return {
    hung: summary.barns.reduce((sum, barn) => sum + barn.ropesHung, 0),
    returned: summary.barns.reduce((sum, barn) => sum + barn.ropesReturned, 0),
  };
}

/** One assay's counts over every barn of the round; a barn without a tally of the assay adds no result. */
export function siteTally(summary: Pick<RoundSummary, 'barns'>, assayId: string): SiteTally {
  const tally: SiteTally = {
    pens: 0,
    ...siteRopes(summary),
    tested: 0,
    positive: 0,
    suspect: 0,
    negative: 0,
    invalid: 0,
  };
  for (const barn of summary.barns) {
    tally.pens += barn.empty ? 0 : barn.pensInUse;
    const entry = barn.assays.find((a) => a.assayId === assayId);
    if (!entry) continue;
    tally.tested += entry.tested;
    tally.positive += entry.positive;
    tally.suspect += entry.suspect;
    tally.negative += entry.negative;
    tally.invalid += entry.invalid;
  }
  return tally;
}
