/**
 * What changed since the last round, pen by pen: the pens newly positive, the pens positive last
 * round whose rope is negative now (cleared), the ropes without a result and the invalid results
 * of this round. Pure: two consecutive rounds of a site in, a plain value out. A pen counts as
 * cleared only on a valid negative result for the same assay; a pen not tested again, or
 * suspect, is not cleared (nothing is known of it).
 */
import type { BarnRound, SiteRound } from '../rounds/roundModel.js';

export interface PenChange {
  barnId: string;
  penId: string;
  assayId: string;
  sampleId: string;
}

export interface MissingRope {
  barnId: string;
  /** null when the rope's pen is not known (a sample ID the round model could not place). */
  penId: string | null;
  sampleId: string;
}

export interface SinceLastRound {
  /** The round compared against; null for a site's first round (then nothing is new or cleared). */
  previous: { number: number; id: string } | null;
  round: { number: number; id: string };
  /** Positive now, not positive in the previous round (negative, suspect, invalid or not roped). */
  newlyPositive: PenChange[];
  /** Positive in the previous round, negative now for the same assay. */
  cleared: PenChange[];
  missing: MissingRope[];
  invalid: PenChange[];
}

function positives(round: SiteRound | null): Set<string> {
  const keys = new Set<string>();
  for (const barn of round?.barns ?? []) {
    for (const pen of barn.pens) {
      for (const result of Object.values(pen.results))
        if (result.resultClass === 'positive') keys.add(`${barn.barnId}/${pen.penId}/${result.assayId}`);
    }
  }
  return keys;
}

function missingRopes(barn: BarnRound): MissingRope[] {
  return barn.missingSampleIds.map((sampleId) => ({
    barnId: barn.barnId,
    penId: barn.missingPens[sampleId] ?? null,
    sampleId,
  }));
}

/**
 * Compares a round with the one before it.
 * @param previous the site's round before `current`, or null for the first round
 * @param current the round to describe
 * @throws RangeError when the two rounds are of different sites or `previous` does not come before `current`
 */
export function sinceLastRound(previous: SiteRound | null, current: SiteRound): SinceLastRound {
  if (previous && previous.siteId !== current.siteId)
    throw new RangeError(`\`previous\` must be a round of site ${current.siteId}, got one of ${previous.siteId}`);
  if (previous && previous.number >= current.number)
    throw new RangeError(`\`previous\` must come before round ${current.number}, got round ${previous.number}`);
  const before = positives(previous);
  const result: SinceLastRound = {
    previous: previous ? { number: previous.number, id: previous.id } : null,
    round: { number: current.number, id: current.id },
    newlyPositive: [],
    cleared: [],
    missing: [],
    invalid: [],
  };
  for (const barn of current.barns) {
    for (const pen of barn.pens) {
      for (const [assayId, penResult] of Object.entries(pen.results)) {
        const change = { barnId: barn.barnId, penId: pen.penId, assayId, sampleId: penResult.sampleId };
        const key = `${barn.barnId}/${pen.penId}/${assayId}`;
        if (penResult.resultClass === 'positive' && previous && !before.has(key)) result.newlyPositive.push(change);
        if (penResult.resultClass === 'negative' && before.has(key)) result.cleared.push(change);
        if (penResult.resultClass === 'invalid') result.invalid.push(change);
      }
    }
    result.missing.push(...missingRopes(barn));
  }
  return result;
}
