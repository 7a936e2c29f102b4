/**
 * Ropes for a barn that is already positive: monitored, not surveyed. Once virus is found, ropes
 * sized to detect infection at the design prevalence answer a question already answered; what a
 * positive barn needs is the course of the infection in it:
 *
 * - re-rope: every pen positive in the barn's current positive period whose last result since is
 *   not negative, so that each of those pens keeps a Ct series (a falling Ct load, then not
 *   detected, is what clearance looks like pen by pen);
 * - retest and follow-up, as for any barn (src/plan/followUp.ts): suspect and invalid pens
 *   re-hung, the ring around the last round's positive pens;
 * - tracking: a small fixed set of pens, the same every round, spread evenly along the barn by
 *   fixed spatial sampling at the phase with the smallest covering radius (placeSystematic with
 *   the rotation held still). Fixed, because spread and clearance are read as a series on the
 *   same pens; evenly spread, because an infection moving along the barn in either direction
 *   reaches one of them. Its size is a program setting (`trackingRopes`), not a sample size:
 *   it watches a trend, it does not prove absence.
 *
 * A pen that qualifies for several reasons gets one rope, labelled by precedence
 * re-rope > retest > follow-up > tracking (the reason that says most about why the pen matters).
 * Pure.
 * @see Cochran WG (1977) Sampling Techniques, ch. 8 (systematic sampling).
 */
import type { BarnPlanNote } from './barnNotes.js';
import { inUsePens, type Pen, type PenContacts } from '../domain/layout.js';
import type { SiteRound } from '../rounds/roundModel.js';
import { penIdsOf } from '../rounds/penIds.js';
import { requireInteger } from '../stats/validate.js';
import { planFollowUp, type RopeReason } from './followUp.js';
import { placeSystematic } from './placement.js';

/** The reason on a rope list row: those of any barn, and those of a monitored (positive) barn. */
export type PlanReason = RopeReason | 're-rope' | 'tracking';

export interface MonitoredBarnInput {
  /** Every pen of the barn (expandLayout). */
  pens: readonly Pen[];
  contacts: PenContacts;
  /** Positive pens to re-rope (see {@link pensToReRope}). */
  reRope: readonly string[];
  /** Clusters of the last round's positive pens, for the follow-up ring. */
  clusters: readonly (readonly string[])[];
  /** Suspect and invalid pens of the last round. */
  retest: readonly string[];
  /** Size of the fixed tracking set, integer >= 0 (capped at the in-use pens). */
  trackingRopes: number;
  ringDistance: number;
  maxExtraRopes?: number;
  detectSet?: (penIds: readonly string[]) => number;
}

export interface MonitoredRope {
  penId: string;
  reason: PlanReason;
}

export interface MonitoredBarnPlan {
  /** Every rope of the barn, each pen once, in barn order. */
  ropes: MonitoredRope[];
  /** The fixed tracking set (pen ids), whatever reason their ropes carry. */
  tracking: string[];
  /** Covering radius of the tracking set alone, pen units; null without tracking ropes. */
  trackingCoveringRadius: number | null;
  notes: BarnPlanNote[];
}

/**
 * The ropes of a positive barn (see the module comment).
 * @throws RangeError for a negative or fractional trackingRopes, or any precondition of
 *   planFollowUp (unknown pen ids)
 */
export function planMonitoredBarn(input: MonitoredBarnInput): MonitoredBarnPlan {
  requireInteger('trackingRopes', input.trackingRopes, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const tracking = trackingPlacement(input.pens, input.trackingRopes);
  const reRope = new Set(input.reRope);
  // Re-roped pens go in with the retests: base ropes of the greedy choice, never ring extras.
  const followUp = planFollowUp({
    pens: input.pens,
    contacts: input.contacts,
    clusters: input.clusters,
    ringDistance: input.ringDistance,
    routine: tracking.penIds,
    retest: [...new Set([...input.reRope, ...input.retest])],
    ...(input.maxExtraRopes !== undefined ? { maxExtraRopes: input.maxExtraRopes } : {}),
    ...(input.detectSet ? { detectSet: input.detectSet } : {}),
  });
  const ropes = followUp.ropes.map(
    (rope): MonitoredRope => ({
      penId: rope.penId,
      reason: reRope.has(rope.penId) ? 're-rope' : rope.reason === 'routine' ? 'tracking' : rope.reason,
    }),
  );
  const notes: BarnPlanNote[] = [
    { kind: 'monitored-barn', reRope: input.reRope.length, tracking: [...tracking.penIds] },
    ...followUp.notes,
  ];
  return {
    ropes,
    tracking: tracking.penIds,
    trackingCoveringRadius: tracking.penIds.length > 0 ? tracking.coveringRadius : null,
    notes,
  };
}

/**
 * Pens to re-rope in a barn positive since `sinceRound`: every pen positive for one of `assays`
 * in a round from `sinceRound` on whose latest result for that assay since is not negative (a
 * pen that tested negative after its positive has its series; a pen whose later rope failed or
 * was not hung still needs one). In pen order of the barn's layout.
 */
export function pensToReRope(
  rounds: readonly SiteRound[],
  barnId: string,
  assays: readonly string[],
  sinceRound: number,
): string[] {
  const latest = new Map<string, string>();
  // From the barn's tallies (pens by the class of their result), not its pens: a long positive
  // period is read without the pens of every round in it.
  for (const round of rounds) {
    if (round.number < sinceRound) continue;
    const barn = round.barns.find((entry) => entry.barnId === barnId);
    for (const assayId of assays) {
      const tally = barn?.byAssay[assayId];
      if (!tally) continue;
      const notNegative = new Set([...tally.positivePens, ...tally.suspectPens]);
      for (const penId of tally.positivePens) latest.set(`${penId}\u0000${assayId}`, 'positive');
      for (const penId of tally.testedPens) {
        const key = `${penId}\u0000${assayId}`;
        if (!notNegative.has(penId) && latest.has(key)) latest.set(key, 'negative');
      }
    }
  }
  const pens = new Set([...latest].filter(([, state]) => state === 'positive').map(([key]) => key.split('\u0000')[0]!));
  const lastBarn = rounds.at(-1)?.barns.find((entry) => entry.barnId === barnId);
  const order = lastBarn ? penIdsOf(lastBarn) : [];
  const rank = (penId: string) => {
    const index = order.indexOf(penId);
    return index === -1 ? order.length : index;
  };
  return [...pens].sort((a, b) => rank(a) - rank(b) || (a < b ? -1 : a > b ? 1 : 0));
}

/**
 * Ropes a positive barn hangs in place of its routine ropes: the re-roped pens and the tracking
 * set, each pen once (in-use pens only). Follow-up and retest ropes come on top, as in any barn.
 */
export function monitoringBaseRopes(pens: readonly Pen[], reRope: readonly string[], trackingRopes: number): number {
  requireInteger('trackingRopes', trackingRopes, 0, Number.MAX_SAFE_INTEGER, '[0, infinity)');
  const inUse = new Set(inUsePens(pens).map((pen) => pen.id));
  return new Set([...reRope.filter((id) => inUse.has(id)), ...trackingPlacement(pens, trackingRopes).penIds]).size;
}

/** The fixed tracking set: evenly spaced with the rotation held still (round 0), so the same pens every round. */
function trackingPlacement(pens: readonly Pen[], trackingRopes: number): ReturnType<typeof placeSystematic> {
  const inUse = inUsePens(pens).length;
  return placeSystematic(pens, { ropes: Math.min(trackingRopes, inUse), roundIndex: 0 });
}
