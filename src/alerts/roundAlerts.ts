/**
 * Which alerts a round raises: the decisions only, as plain values (the wording is the report's,
 * src/report/html/alerts.ts). Only comparisons of values the analysis already holds (this round
 * against the previous ones, counts against zero, the spatial alerts of src/analysis/spatialRound):
 * no statistics are computed here.
 */
import type { NextRoundPlan } from '../analysis/nextRound.js';
import type { RoundSummary } from '../analysis/roundSummary.js';
import type { RoundSpatial } from '../analysis/spatialRound.js';
import { simplyMissing } from '../report/roundNotes.js';

type SummaryAssay = RoundSummary['assays'][number];
type SummaryBarn = RoundSummary['barns'][number];
type BarnTally = SummaryBarn['assays'][number];
type SpatialAlert = RoundSpatial['assays'][number]['alerts'][number];
/** The spatial analysis of one barn for one assay. */
export type BarnReport = RoundSpatial['assays'][number]['report']['barns'][number];

/** Positives of one assay in one barn: the first on the site, a barn newly positive, or positive again. */
export interface PositiveRaised {
  kind: 'first-positive' | 'new-positive-barn' | 'positive-again';
  assay: SummaryAssay;
  barn: SummaryBarn;
  tally: BarnTally;
  /** Positive pens of this barn and assay in the previous round (0 without one). */
  previousPositive: number;
  /** Whether the previous round tested this assay at all. */
  testedBefore: boolean;
  report: BarnReport | undefined;
  /** A significant cluster in this barn, told inside this alert. */
  clustered: boolean;
}

/** A spatial alert not told inside a positive alert. */
export interface SpatialRaised {
  kind: 'significant-cluster' | 'spread' | 'new-focus';
  entry: SpatialAlert;
  barnName: string;
}

export type RoundAlertFacts =
  | PositiveRaised
  | SpatialRaised
  | { kind: 'freedom-reset'; assay: SummaryAssay }
  | { kind: 'call-differs'; disagreements: RoundSummary['disagreements'] }
  | { kind: 'invalid' | 'suspect'; barn: SummaryBarn; tally: BarnTally }
  | { kind: 'mistyped-id'; barn: SummaryBarn }
  | { kind: 'missing-ropes'; barn: SummaryBarn; missing: readonly string[] }
  | { kind: 'late-round'; days: number }
  | { kind: 'overdue'; plan: NextRoundPlan };

const positiveOf = (barn: SummaryBarn, assayId: string): number =>
  barn.assays.find((a) => a.assayId === assayId)?.positive ?? 0;

/** One alert per positive barn and assay, and the barns whose significant cluster it tells. */
function positiveAlerts(
  summaries: readonly RoundSummary[],
  spatial: readonly (RoundSpatial | undefined)[],
  index: number,
  told: Set<string>,
): PositiveRaised[] {
  const summary = summaries[index]!;
  const previous = index > 0 ? summaries[index - 1]! : null;
  const raised: PositiveRaised[] = [];
  for (const assay of summary.assays) {
    const positiveBarns = summary.barns.filter((barn) => positiveOf(barn, assay.id) > 0);
    if (positiveBarns.length === 0) continue;
    const earlier = summaries.slice(0, index).some((s) => s.barns.some((barn) => positiveOf(barn, assay.id) > 0));
    const assaySpatial = spatial[index]?.assays.find((entry) => entry.assayId === assay.id);
    for (const barn of positiveBarns) {
      const before = previous?.barns.find((b) => b.barnId === barn.barnId);
      const previousPositive = before ? positiveOf(before, assay.id) : 0;
      const clustered = (assaySpatial?.alerts ?? []).some(
        (entry) => entry.kind === 'significant-cluster' && entry.barnId === barn.barnId,
      );
      if (clustered) told.add(`${assay.id}/${barn.barnId}`);
      raised.push({
        kind: !earlier ? 'first-positive' : previousPositive > 0 ? 'positive-again' : 'new-positive-barn',
        assay,
        barn,
        tally: barn.assays.find((a) => a.assayId === assay.id)!,
        previousPositive,
        testedBefore: previous?.assays.some((other) => other.id === assay.id) ?? false,
        report: assaySpatial?.report.barns.find((entry) => entry.barn === barn.barnId),
        clustered,
      });
    }
  }
  return raised;
}

/** Spread, new focus, and a significant cluster of a barn whose positive alert did not tell it. */
function spatialAlerts(summary: RoundSummary, round: RoundSpatial | undefined, told: Set<string>): SpatialRaised[] {
  const barnName = (barnId: string | null) =>
    summary.barns.find((barn) => barn.barnId === barnId)?.name ?? `barn ${barnId ?? ''}`;
  const raised: SpatialRaised[] = [];
  for (const assay of round?.assays ?? []) {
    for (const entry of assay.alerts) {
      const untold = entry.kind === 'significant-cluster' && !told.has(`${entry.assayId}/${entry.barnId}`);
      if (untold || entry.kind === 'spread' || entry.kind === 'new-focus') {
        raised.push({ kind: entry.kind as SpatialRaised['kind'], entry, barnName: barnName(entry.barnId) });
      }
    }
  }
  return raised;
}

/** Assays whose freedom this round resets: said once, in the round that lost it, not in every positive round after. */
function freedomResets(summaries: readonly RoundSummary[], index: number): SummaryAssay[] {
  return summaries[index]!.assays.filter((assay) => {
    if (!assay.site.freedomReset) return false;
    const lastTested = summaries
      .slice(0, index)
      .reverse()
      .find((s) => s.assays.some((other) => other.id === assay.id));
    return !lastTested?.assays.find((other) => other.id === assay.id)?.site.freedomReset;
  });
}

/** Invalid and suspect results, results refused under a mistyped ID, and ropes simply missing, barn by barn. */
function barnAlerts(summary: RoundSummary): RoundAlertFacts[] {
  const raised: RoundAlertFacts[] = [];
  for (const barn of summary.barns) {
    for (const tally of barn.assays) {
      if (tally.invalid > 0) raised.push({ kind: 'invalid', barn, tally });
      if (tally.suspect > 0) raised.push({ kind: 'suspect', barn, tally });
    }
    if (barn.mistyped.length > 0) raised.push({ kind: 'mistyped-id', barn });
    const missing = simplyMissing(barn);
    if (missing.length > 0) raised.push({ kind: 'missing-ropes', barn, missing });
  }
  return raised;
}

/** Days since the previous round when that is past the interval and its window, else null. */
function lateBy(summary: RoundSummary): number | null {
  const days = summary.assays.map((assay) => assay.site.daysSincePrevious).find((value) => value !== null) ?? null;
  return days !== null && days > summary.program.intervalDays + summary.program.roundWindowDays ? days : null;
}

/**
 * The alerts round `index` of a site raises, in the order they are told: positives per barn
 * (first on the site, new in a barn, positive again), spread / new focus, freedom reset (only in
 * the round that lost it), the lab's call differing from the reading, invalid, suspect, results
 * refused under a mistyped ID, missing ropes (without those), a late round, and (for the latest
 * round, with the plan) an overdue next round. A significant cluster is told inside the positive
 * alert of its barn.
 * @param summaries every round summary of the site, in order
 * @param spatial the spatial analysis of the same rounds (same order)
 * @param index the round to describe, an integer in [0, summaries.length - 1]
 * @param plan the next-round plan, given only for the latest round
 * @throws RangeError when `index` is out of range
 */
export function raisedAlerts(
  summaries: readonly RoundSummary[],
  spatial: readonly (RoundSpatial | undefined)[],
  index: number,
  plan?: NextRoundPlan,
): RoundAlertFacts[] {
  if (!Number.isInteger(index) || index < 0 || index >= summaries.length) {
    throw new RangeError(`\`index\` must be an integer in [0, ${summaries.length - 1}], got ${index}`);
  }
  const summary = summaries[index]!;
  const told = new Set<string>();
  const raised: RoundAlertFacts[] = [...positiveAlerts(summaries, spatial, index, told)];
  raised.push(...spatialAlerts(summary, spatial[index], told));
  raised.push(...freedomResets(summaries, index).map((assay) => ({ kind: 'freedom-reset' as const, assay })));
  if (summary.disagreements.length > 0) raised.push({ kind: 'call-differs', disagreements: summary.disagreements });
  raised.push(...barnAlerts(summary));
  const days = lateBy(summary);
  if (days !== null) raised.push({ kind: 'late-round', days });
  if (plan?.overdue) raised.push({ kind: 'overdue', plan });
  return raised;
}
