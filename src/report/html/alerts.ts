/**
 * Alerts of a round in plain words, each with the number behind it. Only comparisons of values
 * the analysis already holds (this round against the previous ones, counts against zero, the
 * spatial alerts of src/analysis/spatialRound): no statistics are computed here.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import type { RoundSpatial } from '../../analysis/spatialRound.js';
import type { NextRoundPlan } from '../../analysis/nextRound.js';
import { MISTYPED_ACTION, refusalGroups, simplyMissing } from '../roundNotes.js';
import { escapeHtml } from './escape.js';
import { formatPValue, formatPercent } from '../../util/format.js';

export type AlertKind =
  | 'first-positive'
  | 'new-positive-barn'
  | 'positive-again'
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

/**
 * One alert: first what to do, in plain words (`action`), then the number behind it (`detail`:
 * the statistic and its p-value, the counts). `message` is both on one line, for the index and
 * any plain-text channel; `numbers` and `pens` hold the values the two lines quote.
 */
export interface PageAlert {
  kind: AlertKind;
  assayId: string | null;
  barnId: string | null;
  action: string;
  detail: string;
  message: string;
  numbers: Readonly<Record<string, number | null>>;
  pens: readonly string[];
}

/** One alert: what to do first, in bold; the number behind it on a second line. */
export function alertItem(alert: { kind: string; action: string; detail: string }): string {
  return `<li data-alert="${escapeHtml(alert.kind)}"><strong class="action">${escapeHtml(alert.action)}</strong><br><span class="detail">${escapeHtml(alert.detail)}</span></li>`;
}

const plural = (n: number, word: string) => `${n} ${word}${n === 1 ? '' : 's'}`;

function alert(
  kind: AlertKind,
  assayId: string | null,
  barnId: string | null,
  action: string,
  detail: string,
  numbers: Record<string, number | null> = {},
  pens: readonly string[] = [],
): PageAlert {
  return { kind, assayId, barnId, action, detail, message: `${action}. ${detail}`, numbers, pens };
}

/** "A3\u2013B9": the first and last pen of a group in the barn's layout order (the order of `ordered`). */
export function penSpan(pens: readonly string[], ordered: readonly string[]): string {
  const inOrder = ordered.filter((pen) => pens.includes(pen));
  const list = inOrder.length === pens.length ? inOrder : [...pens];
  if (list.length === 0) return '';
  return list.length === 1 ? list[0]! : `${list[0]}\u2013${list.at(-1)}`;
}

type BarnReport = RoundSpatial['assays'][number]['report']['barns'][number];

/**
 * The positives of one barn and assay in words: where they are and the statistic that says
 * whether they cluster. A significant join count or scan window (alpha as the spatial analysis
 * used it: its alert says so) reads as "clustered around" the span of the largest cluster.
 */
function positiveWhere(
  positivePens: readonly string[],
  report: BarnReport | undefined,
  clustered: boolean,
): { where: string; stats: string[]; numbers: Record<string, number | null> } {
  const stats: string[] = [];
  const numbers: Record<string, number | null> = {};
  const jc = report?.joinCount ?? null;
  if (jc && positivePens.length >= 2) {
    stats.push(
      `join count ${jc.bb} positive\u2013positive joins against ${jc.expectedBB.toFixed(2)} expected, ${jc.inference.method === 'exact' ? 'exact' : 'permutation'} p = ${formatPValue(jc.pPermutation)}`,
    );
    Object.assign(numbers, { joinCountBB: jc.bb, joinCountExpected: jc.expectedBB, joinCountP: jc.pPermutation });
  }
  const scan = report?.scan?.mostLikely ?? null;
  // The scan statistic only where the join count could not be computed: one statistic per alert, the cluster review has both.
  if (scan && positivePens.length >= 2 && !jc) {
    stats.push(
      `scan statistic: ${scan.positives} positive in ${plural(scan.pens.length, 'rope')} around ${scan.centre}, ${scan.expected.toFixed(2)} expected, p = ${formatPValue(scan.p)}`,
    );
    Object.assign(numbers, { scanPositives: scan.positives, scanExpected: scan.expected, scanP: scan.p });
  }
  const largest = [...(report?.clusters ?? [])]
    .filter((cluster) => cluster.size >= 2)
    .sort((a, b) => b.size - a.size || a.index - b.index)[0];
  if (clustered && largest)
    return { where: `, clustered around ${penSpan(largest.pens, positivePens)}`, stats, numbers };
  if (positivePens.length >= 2 && jc && !clustered)
    return {
      where: positivePens.length <= 6 ? ` (${positivePens.join(', ')}), not clustered` : ', scattered through the barn',
      stats,
      numbers,
    };
  return { where: positivePens.length <= 6 ? ` (${positivePens.join(', ')})` : '', stats, numbers };
}

/**
 * The alerts of round `index` of a site. Order: positives per barn (first on the site, new in a
 * barn, positive again), spread / new focus, freedom reset (only in the round that lost it, not
 * in every positive round after), the lab's call differing from the reading, invalid, suspect,
 * results refused under a mistyped ID, missing ropes (without those), a late round, and (for the
 * latest round, with the plan) an overdue next round. A significant cluster is told inside the
 * positive alert of its barn, with its statistic and p-value.
 * @param summaries every round summary of the site, in order
 * @param spatial the spatial analysis of the same rounds (same order)
 * @param index the round to describe, an integer in [0, summaries.length - 1]
 * @param plan the next-round plan, given only for the latest round
 * @throws RangeError when `index` is out of range
 */
export function roundAlerts(
  summaries: readonly RoundSummary[],
  spatial: readonly RoundSpatial[],
  index: number,
  plan?: NextRoundPlan,
): PageAlert[] {
  if (!Number.isInteger(index) || index < 0 || index >= summaries.length) {
    throw new RangeError(`\`index\` must be an integer in [0, ${summaries.length - 1}], got ${index}`);
  }
  const summary = summaries[index]!;
  const previous = index > 0 ? summaries[index - 1]! : null;
  const alerts: PageAlert[] = [];
  const told = new Set<string>();
  for (const assay of summary.assays) {
    const positiveBarns = summary.barns.filter(
      (barn) => (barn.assays.find((a) => a.assayId === assay.id)?.positive ?? 0) > 0,
    );
    if (positiveBarns.length === 0) continue;
    const earlier = summaries
      .slice(0, index)
      .some((s) => s.barns.some((barn) => (barn.assays.find((a) => a.assayId === assay.id)?.positive ?? 0) > 0));
    const antibody = assay.measure === 'sp-ratio';
    const assaySpatial = spatial[index]?.assays.find((entry) => entry.assayId === assay.id);
    for (const barn of positiveBarns) {
      const tally = barn.assays.find((a) => a.assayId === assay.id)!;
      const before =
        previous?.barns.find((b) => b.barnId === barn.barnId)?.assays.find((a) => a.assayId === assay.id)?.positive ??
        0;
      const testedBefore = previous?.assays.some((other) => other.id === assay.id) ?? false;
      const kind: AlertKind = !earlier ? 'first-positive' : before > 0 ? 'positive-again' : 'new-positive-barn';
      const report = assaySpatial?.report.barns.find((entry) => entry.barn === barn.barnId);
      const clustered = (assaySpatial?.alerts ?? []).some(
        (entry) => entry.kind === 'significant-cluster' && entry.barnId === barn.barnId,
      );
      const { where, stats, numbers } = positiveWhere(tally.positivePens, report, clustered);
      if (clustered) told.add(`${assay.id}/${barn.barnId}`);
      // An antibody positive means exposure (infection or vaccination), not necessarily virus now;
      // an unexpected one is retested by PCR (common practice, no source).
      const todo = antibody
        ? 'retest these pens by PCR and tell the herd veterinarian'
        : 'tell the herd veterinarian today';
      const notifiable = assay.notifiable ? '; notifiable: report it to the competent authority under local rules' : '';
      const label = antibody ? `Antibody to ${assay.name}` : `Positive ${assay.name}`;
      const first = kind === 'first-positive' ? ' (first on this site)' : kind === 'positive-again' ? ' again' : '';
      const action = `${label} in ${barn.name}${first}: ${plural(tally.positive, 'pen')}${where}; ${todo}${notifiable}`;
      const history =
        kind === 'first-positive'
          ? `first ${assay.name} positive on this site`
          : kind === 'positive-again'
            ? `${before} positive in the previous round`
            : testedBefore
              ? 'had none in the previous round'
              : `${assay.id} was not tested in the previous round`;
      const exposure = antibody
        ? ' Antibody means exposure, not necessarily current infection: retest these pens by PCR.'
        : '';
      const detail = `${tally.positive} of ${plural(tally.tested, 'tested pen')} ${assay.id} positive${where === '' || where.startsWith(', scattered') ? ` (${tally.positivePens.join(', ')})` : ''}; ${history}${stats.length > 0 ? `; ${stats.join('; ')}` : ''}.${exposure}`;
      alerts.push(
        alert(
          kind,
          assay.id,
          barn.barnId,
          action,
          detail,
          { positive: tally.positive, tested: tally.tested, previousPositive: before, ...numbers },
          tally.positivePens,
        ),
      );
    }
  }
  for (const assay of spatial[index]?.assays ?? []) {
    const barnName = (barnId: string | null) =>
      summary.barns.find((barn) => barn.barnId === barnId)?.name ?? `barn ${barnId ?? ''}`;
    for (const entry of assay.alerts) {
      if (entry.kind === 'significant-cluster' && !told.has(`${entry.assayId}/${entry.barnId}`)) {
        alerts.push(
          alert(
            'significant-cluster',
            entry.assayId,
            entry.barnId,
            `${entry.assayId} positives cluster in ${barnName(entry.barnId)}: tell the herd veterinarian and look at the cluster review`,
            entry.message,
          ),
        );
      } else if (entry.kind === 'spread') {
        alerts.push(
          alert(
            'spread',
            entry.assayId,
            entry.barnId,
            `${entry.assayId} is moving pen to pen in ${barnName(entry.barnId)}: tell the herd veterinarian; the next round follows it up`,
            entry.message,
          ),
        );
      } else if (entry.kind === 'new-focus') {
        alerts.push(
          alert(
            'new-focus',
            entry.assayId,
            entry.barnId,
            `New ${entry.assayId} focus in ${barnName(entry.barnId)}, away from earlier positives: ask how it got there (people, feed, transport)`,
            entry.message,
          ),
        );
      }
    }
  }
  for (const assay of summary.assays) {
    if (!assay.site.freedomReset) continue;
    // Said once, in the round that lost the freedom: a later positive round has nothing to reset.
    const lastTested = summaries
      .slice(0, index)
      .reverse()
      .find((s) => s.assays.some((other) => other.id === assay.id));
    if (lastTested?.assays.find((other) => other.id === assay.id)?.site.freedomReset) continue;
    const numbers = { priorFreedom: assay.site.priorFreedom, startsFrom: summary.program.priorFreedom };
    if (assay.measure === 'sp-ratio') {
      const pcr =
        assay.pairedWith === null
          ? 'the PCR assay'
          : (summary.assays.find((other) => other.id === assay.pairedWith)?.name ?? assay.pairedWith);
      alerts.push(
        alert(
          'freedom-reset',
          assay.id,
          null,
          `Freedom from exposure to ${assay.name} (antibody) is lost with this round`,
          `It was ${formatPercent(assay.site.priorFreedom)} before this round and starts again from the prior. The freedom of ${pcr} is not reset: antibody means exposure, not necessarily current infection.`,
          numbers,
        ),
      );
    } else {
      alerts.push(
        alert(
          'freedom-reset',
          assay.id,
          null,
          `Freedom from ${assay.name} is lost with this round: the site is positive${assay.site.status?.state === 'positive' ? ` since round ${assay.site.status.sinceRound}` : ''}`,
          `The probability of freedom was ${formatPercent(assay.site.priorFreedom)} before this round; it starts again from the prior ${formatPercent(summary.program.priorFreedom)} once every positive barn has had ${summary.program.clearAfterNegativeRounds} negative round${summary.program.clearAfterNegativeRounds === 1 ? '' : 's'} in a row.`,
          numbers,
        ),
      );
    }
  }
  const differing = summary.disagreements;
  if (differing.length > 0) {
    const perBarn = [...new Set(differing.map((entry) => entry.barnId))].map(
      (barnId) => `${barnId}: ${differing.filter((entry) => entry.barnId === barnId).length}`,
    );
    alerts.push(
      alert(
        'call-differs',
        null,
        null,
        `Check the cutoffs in the lab profile against the lab\u2019s report before acting on ${differing.length === 1 ? 'this result' : 'these results'}`,
        `${plural(differing.length, 'result')} where the lab's own call differs from the reading with the lab's cutoffs in the configuration (${perBarn.join(', ')}): ` +
          `each sample is listed with both readings under "Lab call and reading disagree".`,
        { results: differing.length },
        differing.map((entry) => entry.penId),
      ),
    );
  }
  for (const barn of summary.barns) {
    for (const tally of barn.assays) {
      if (tally.invalid > 0) {
        alerts.push(
          alert(
            'invalid',
            tally.assayId,
            barn.barnId,
            `Retest ${tally.invalidPens.join(', ')} in ${barn.name} for ${tally.assayId}`,
            `${plural(tally.invalid, 'invalid result')} for ${tally.assayId} in barn ${barn.barnId} (${tally.invalidPens.join(', ')}): an invalid result is neither negative nor positive, and lowers the detection confidence.`,
            { invalid: tally.invalid },
            tally.invalidPens,
          ),
        );
      }
      if (tally.suspect > 0) {
        const near =
          tally.confidence.measure === 'sp-ratio'
            ? 'an S/P just below the positive cutoff'
            : 'a high Ct just above the positive cutoff';
        alerts.push(
          alert(
            'suspect',
            tally.assayId,
            barn.barnId,
            `Consider retesting ${tally.suspectPens.join(', ')} in ${barn.name} (suspect ${tally.assayId})`,
            `${plural(tally.suspect, 'suspect result')} for ${tally.assayId} in barn ${barn.barnId} (${tally.suspectPens.join(', ')}): ${near}; usually retested.`,
            { suspect: tally.suspect },
            tally.suspectPens,
          ),
        );
      }
    }
    if (barn.mistyped.length > 0) {
      // The rope is not lost: a row came back under an ID one keying error from its planned ID.
      const ropes = barn.mistyped.map(
        (rope) =>
          `pen ${rope.penId}, planned ${rope.sampleId}, came back as ${refusalGroups(rope)
            .map(
              (group) =>
                `${group.written} (${group.fileName}, line${group.lines.length === 1 ? '' : 's'} ${group.lines.join(', ')})`,
            )
            .join(' and ')}`,
      );
      alerts.push(
        alert(
          'mistyped-id',
          null,
          barn.barnId,
          `Confirm ${barn.mistyped.length === 1 ? 'a sample ID' : `${barn.mistyped.length} sample IDs`} in ${barn.name}: to count ${barn.mistyped.length === 1 ? 'it' : 'them'}, ${MISTYPED_ACTION}`,
          `${plural(barn.mistyped.length, 'result')} in barn ${barn.barnId} refused under a mistyped ID (${ropes.join('; ')}): not counted until a person confirms the ID; the line to add is under barn ${barn.barnId}.`,
          { mistyped: barn.mistyped.length },
          barn.mistyped.map((rope) => rope.penId),
        ),
      );
    }
    const missing = simplyMissing(barn);
    if (missing.length > 0) {
      alerts.push(
        alert(
          'missing-ropes',
          null,
          barn.barnId,
          `Ask the producer and the lab about ${plural(missing.length, 'rope')} of ${barn.name} without a result`,
          // ropesHung counts the planned ropes too: returned + missing + mistyped = hung, so the numbers add up.
          `${plural(missing.length, 'rope')} in barn ${barn.barnId} without a result (${missing.join(', ')}): ${barn.ropesReturned} of ${barn.ropesHung} ropes on sheets or plans came back` +
            `${barn.mistyped.length > 0 ? ` and ${barn.mistyped.length} under a mistyped ID` : ''}; missing ropes lower the detection confidence.`,
          { missing: missing.length, returned: barn.ropesReturned, hung: barn.ropesHung },
        ),
      );
    }
  }
  const days = summary.assays.map((assay) => assay.site.daysSincePrevious).find((value) => value !== null) ?? null;
  if (days !== null && days > summary.program.intervalDays + summary.program.roundWindowDays) {
    alerts.push(
      alert(
        'late-round',
        null,
        null,
        'Keep to the round interval: this round came late',
        `It started ${days} days after the previous one; the program interval is ${summary.program.intervalDays} days. Introduction risk accrued over the extra ${days - summary.program.intervalDays} days.`,
        { days, intervalDays: summary.program.intervalDays },
      ),
    );
  }
  if (plan?.overdue) {
    alerts.push(
      alert(
        'overdue',
        null,
        null,
        `Hang the ropes of round ${plan.round} now: it is overdue`,
        `Round ${plan.round} was due on ${plan.dueDate}, ${plural(plan.daysOverdue, 'day')} ago.`,
        { daysOverdue: plan.daysOverdue },
      ),
    );
  }
  return alerts;
}

/**
 * Every round's alerts of a site, in round order: the pages, the digest and the alert records
 * read the same list, built once (each round's alerts look back over the rounds before it). The
 * plan's overdue alert belongs to the latest round.
 */
export function alertsOfRounds(analysis: {
  summaries: readonly RoundSummary[];
  spatial: readonly RoundSpatial[];
  plan: NextRoundPlan;
}): PageAlert[][] {
  const last = analysis.summaries.length - 1;
  return analysis.summaries.map((_, index) =>
    roundAlerts(analysis.summaries, analysis.spatial, index, index === last ? analysis.plan : undefined),
  );
}
