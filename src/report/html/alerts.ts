/**
 * Alerts of a round in plain words, each with the number behind it. Only comparisons of values
 * the analysis already holds (this round against the previous ones, counts against zero, the
 * spatial alerts of src/analysis/spatialRound): no statistics are computed here.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import type { RoundSpatial } from '../../analysis/spatialRound.js';
import type { NextRoundPlan } from '../../analysis/nextRound.js';
import { MISTYPED_ACTION, refusalGroups, simplyMissing } from '../roundNotes.js';

export type AlertKind =
  | 'first-positive'
  | 'new-positive-barn'
  | 'significant-cluster'
  | 'spread'
  | 'new-focus'
  | 'missing-ropes'
  | 'mistyped-id'
  | 'late-round'
  | 'overdue'
  | 'invalid'
  | 'suspect'
  | 'freedom-reset'
  | 'call-differs';

export interface PageAlert {
  kind: AlertKind;
  assayId: string | null;
  barnId: string | null;
  message: string;
}

const pct = (p: number) => `${(100 * p).toFixed(1)}%`;
const plural = (n: number, word: string) => `${n} ${word}${n === 1 ? '' : 's'}`;

/**
 * The alerts of round `index` of a site. Order: first positive on the site, new positive barn,
 * significant cluster / spread / new focus, freedom reset, the lab's call differing from the
 * reading, invalid, suspect, results refused under a mistyped ID, missing ropes (without those),
 * a late round, and (for the latest round, with the plan) an overdue next round.
 * @param summaries every round summary of the site, in order
 * @param spatial the spatial analysis of the same rounds (same order)
 * @param index the round to describe, an integer in [0, summaries.length - 1]
 * @param plan the next-round plan, given only for the latest round
 * @throws RangeError when `index` is out of range
 */
export function roundAlerts(summaries: readonly RoundSummary[], spatial: readonly RoundSpatial[], index: number, plan?: NextRoundPlan): PageAlert[] {
  if (!Number.isInteger(index) || index < 0 || index >= summaries.length) {
    throw new RangeError(`\`index\` must be an integer in [0, ${summaries.length - 1}], got ${index}`);
  }
  const summary = summaries[index]!;
  const previous = index > 0 ? summaries[index - 1]! : null;
  const alerts: PageAlert[] = [];
  for (const assay of summary.assays) {
    const positiveBarns = summary.barns.filter((barn) => (barn.assays.find((a) => a.assayId === assay.id)?.positive ?? 0) > 0);
    if (positiveBarns.length === 0) continue;
    const ropes = positiveBarns.reduce((sum, barn) => sum + barn.assays.find((a) => a.assayId === assay.id)!.positive, 0);
    const earlier = summaries.slice(0, index).some((s) => s.barns.some((barn) => (barn.assays.find((a) => a.assayId === assay.id)?.positive ?? 0) > 0));
    // An antibody positive means exposure (infection or vaccination), not necessarily virus now;
    // an unexpected one is retested by PCR (common practice, no source).
    const exposure = assay.measure === 'sp-ratio' ? ' Antibody means exposure, not necessarily current infection: retest these pens by PCR.' : '';
    if (!earlier) {
      alerts.push({
        kind: 'first-positive',
        assayId: assay.id,
        barnId: null,
        message: `First ${assay.name} positive on this site: ${plural(ropes, 'positive rope')} in ${positiveBarns.map((barn) => `barn ${barn.barnId} (${barn.assays.find((a) => a.assayId === assay.id)!.positivePens.join(', ')})`).join(', ')}.${exposure}`,
      });
      continue;
    }
    for (const barn of positiveBarns) {
      const before = previous?.barns.find((b) => b.barnId === barn.barnId)?.assays.find((a) => a.assayId === assay.id)?.positive ?? 0;
      if (before > 0) continue;
      const tally = barn.assays.find((a) => a.assayId === assay.id)!;
      alerts.push({
        kind: 'new-positive-barn',
        assayId: assay.id,
        barnId: barn.barnId,
        message: `New positive barn: ${barn.name} (${barn.barnId}) has ${plural(tally.positive, `${assay.id} positive rope`)} (${tally.positivePens.join(', ')}) and ${previous?.assays.some((other) => other.id === assay.id) ? 'had none in the previous round' : `${assay.id} was not tested in the previous round`}.${exposure}`,
      });
    }
  }
  for (const assay of spatial[index]?.assays ?? []) {
    for (const alert of assay.alerts) {
      if (alert.kind === 'significant-cluster' || alert.kind === 'spread' || alert.kind === 'new-focus') {
        alerts.push({ kind: alert.kind, assayId: alert.assayId, barnId: alert.barnId, message: alert.message });
      }
    }
  }
  for (const assay of summary.assays) {
    if (assay.site.freedomReset) {
      const pcr = assay.pairedWith === null ? 'the PCR assay' : (summary.assays.find((other) => other.id === assay.pairedWith)?.name ?? assay.pairedWith);
      alerts.push({
        kind: 'freedom-reset',
        assayId: assay.id,
        barnId: null,
        message:
          assay.measure === 'sp-ratio'
            ? `Freedom from exposure reset for ${assay.name} (antibody): it was ${pct(assay.site.priorFreedom)} before this round and starts again from the prior. The freedom of ${pcr} is not reset: antibody means exposure, not necessarily current infection.`
            : `Freedom reset for ${assay.name}: the probability of freedom was ${pct(assay.site.priorFreedom)} before this round; the site is positive${assay.site.status?.state === 'positive' ? ` since round ${assay.site.status.sinceRound}` : ''} and its freedom starts again from the prior once every positive barn has had ${summary.program.clearAfterNegativeRounds} negative round${summary.program.clearAfterNegativeRounds === 1 ? '' : 's'} in a row.`,
      });
    }
  }
  const differing = summary.disagreements;
  if (differing.length > 0) {
    const perBarn = [...new Set(differing.map((entry) => entry.barnId))].map((barnId) => `${barnId}: ${differing.filter((entry) => entry.barnId === barnId).length}`);
    alerts.push({
      kind: 'call-differs',
      assayId: null,
      barnId: null,
      message:
        `${plural(differing.length, 'result')} where the lab's own call differs from the reading with the lab's cutoffs in the configuration (${perBarn.join(', ')}): ` +
        `each sample is listed with both readings under "Lab call and reading disagree"; check the cutoffs in the lab profile against the lab's report before acting on either.`,
    });
  }
  for (const barn of summary.barns) {
    for (const tally of barn.assays) {
      if (tally.invalid > 0) {
        alerts.push({
          kind: 'invalid',
          assayId: tally.assayId,
          barnId: barn.barnId,
          message: `${plural(tally.invalid, 'invalid result')} for ${tally.assayId} in barn ${barn.barnId} (${tally.invalidPens.join(', ')}): retest; an invalid result is neither negative nor positive.`,
        });
      }
      if (tally.suspect > 0) {
        const near = tally.confidence.measure === 'sp-ratio' ? 'an S/P just below the positive cutoff' : 'a high Ct just above the positive cutoff';
        alerts.push({
          kind: 'suspect',
          assayId: tally.assayId,
          barnId: barn.barnId,
          message: `${plural(tally.suspect, 'suspect result')} for ${tally.assayId} in barn ${barn.barnId} (${tally.suspectPens.join(', ')}): ${near}; usually retested.`,
        });
      }
    }
    if (barn.mistyped.length > 0) {
      // The rope is not lost: a row came back under an ID one keying error from its planned ID.
      const ropes = barn.mistyped.map(
        (rope) => `pen ${rope.penId}, planned ${rope.sampleId}, came back as ${refusalGroups(rope).map((group) => `${group.written} (${group.fileName}, line${group.lines.length === 1 ? '' : 's'} ${group.lines.join(', ')})`).join(' and ')}`,
      );
      alerts.push({
        kind: 'mistyped-id',
        assayId: null,
        barnId: barn.barnId,
        message:
          `${plural(barn.mistyped.length, 'result')} in barn ${barn.barnId} refused under a mistyped ID (${ropes.join('; ')}): not counted until a person confirms the ID. ` +
          `To count it, ${MISTYPED_ACTION}; the line to add is under barn ${barn.barnId}.`,
      });
    }
    const missing = simplyMissing(barn);
    if (missing.length > 0) {
      alerts.push({
        kind: 'missing-ropes',
        assayId: null,
        barnId: barn.barnId,
        message: `${plural(missing.length, 'rope')} in barn ${barn.barnId} without a result (${missing.join(', ')}): ${barn.ropesReturned} of ${barn.ropesHung} hung ropes came back; missing ropes lower the detection confidence.`,
      });
    }
  }
  const days = summary.assays.map((assay) => assay.site.daysSincePrevious).find((value) => value !== null) ?? null;
  if (days !== null && days > summary.program.intervalDays + summary.program.roundWindowDays) {
    alerts.push({
      kind: 'late-round',
      assayId: null,
      barnId: null,
      message: `Late round: it started ${days} days after the previous one; the program interval is ${summary.program.intervalDays} days. Introduction risk accrued over the extra ${days - summary.program.intervalDays} days.`,
    });
  }
  if (plan && plan.overdue) {
    alerts.push({
      kind: 'overdue',
      assayId: null,
      barnId: null,
      message: `Next round overdue: round ${plan.round} was due on ${plan.dueDate}, ${plural(plan.daysOverdue, 'day')} ago.`,
    });
  }
  return alerts;
}
