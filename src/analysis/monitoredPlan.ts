/**
 * Which barns the next round monitors instead of surveying, and how the plan says so. A barn
 * positive for a PCR assay after the last round (src/analysis/barnStatus.ts) gets no ropes sized
 * for detection at the design prevalence: infection there is known, and a detection size for it
 * (a rope in most pens of a barn with eight positive pens) answers nothing. It gets the ropes of
 * src/plan/monitoring.ts instead. Pure.
 */
import type { Site } from '../config/types.js';
import type { SiteRound } from '../rounds/roundModel.js';
import { monitoringBaseRopes, pensToReRope } from '../plan/monitoring.js';
import type { RoundConfidence } from './confidence.js';
import type { BarnReading, MonitoredBarn, PlannedRound, SizingNote } from './planTypes.js';

/** The barns positive for one of `assays` after the last round, by barn id. */
export function monitoredBarns(
  site: Site,
  lastConfidence: RoundConfidence | undefined,
  rounds: readonly SiteRound[],
  assays: readonly string[],
): Map<string, MonitoredBarn> {
  const byBarn = new Map<string, MonitoredBarn>();
  for (const entry of lastConfidence?.barns ?? []) {
    if (!assays.includes(entry.assayId) || entry.status?.state !== 'positive') continue;
    const status = entry.status;
    const current = byBarn.get(entry.barnId);
    byBarn.set(entry.barnId, {
      barnId: entry.barnId,
      assays: [...(current?.assays ?? []), entry.assayId],
      sinceRound: Math.min(current?.sinceRound ?? status.sinceRound, status.sinceRound),
      negativeRoundsInARow: Math.min(
        current?.negativeRoundsInARow ?? status.negativeRoundsInARow,
        status.negativeRoundsInARow,
      ),
      reRope: [],
      baseRopes: 0,
    });
  }
  for (const entry of byBarn.values()) {
    entry.reRope = pensToReRope(rounds, entry.barnId, entry.assays, entry.sinceRound);
    const barn = site.barns.find((candidate) => candidate.id === entry.barnId);
    entry.baseRopes = barn ? monitoringBaseRopes(barn.pens, entry.reRope, site.program.trackingRopes) : 0;
  }
  return byBarn;
}

/** What a rope budget leaves for the routine ropes of the surveyed barns: the monitored barns' re-rope and tracking ropes come out of it first. */
export function budgetForSurveyed(budget: number | null, monitored: ReadonlyMap<string, MonitoredBarn>): number | null {
  if (budget === null) return null;
  return Math.max(0, budget - [...monitored.values()].reduce((sum, entry) => sum + entry.baseRopes, 0));
}

/**
 * The plan with its monitored barns said as such: their sizing reading replaced (no detection
 * figure for a positive barn), their schedule comparison dropped (it compares detection), a
 * `monitoring` entry per barn, and a note.
 */
export function withMonitoring(
  plan: PlannedRound,
  monitored: ReadonlyMap<string, MonitoredBarn>,
  clearAfterNegativeRounds: number,
): PlannedRound {
  if (monitored.size === 0) return plan;
  const barns = plan.barns.map((barn) => {
    const entry = monitored.get(barn.barnId);
    if (!entry) return barn;
    const statement: BarnReading = {
      kind: 'monitored',
      barnId: barn.barnId,
      assays: entry.assays,
      sinceRound: entry.sinceRound,
      reRope: barn.reRope,
      tracking: barn.tracking,
      followUp: barn.followUp,
      retest: barn.retest,
      clearAfter: clearAfterNegativeRounds,
      negativeRoundsInARow: entry.negativeRoundsInARow,
    };
    return { ...barn, sizing: { ...barn.sizing, statement }, monitoring: entry };
  });
  const ids = [...monitored.keys()];
  const base = [...monitored.values()].reduce((sum, entry) => sum + entry.baseRopes, 0);
  const budgetNote: SizingNote[] =
    plan.sizing.budget === null
      ? []
      : [
          {
            kind: 'monitored-budget',
            positiveBarns: ids.length,
            baseRopes: base,
            budget: plan.sizing.budget,
            surveyedBudget: budgetForSurveyed(plan.sizing.budget, monitored) ?? 0,
          },
        ];
  return {
    ...plan,
    barns,
    schedules: plan.schedules.filter((entry) => !monitored.has(entry.barnId)),
    sizing: { ...plan.sizing, notes: [...plan.sizing.notes, ...budgetNote] },
    notes: [...plan.notes, { kind: 'monitored-barns', barnIds: ids }],
  };
}
