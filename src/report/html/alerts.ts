/**
 * Alerts of a round in plain words, each with the number behind it. Which alerts a round raises
 * is decided in src/alerts/roundAlerts.ts; this module only words them.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import type { RoundSpatial } from '../../analysis/spatialRound.js';
import type { NextRoundPlan } from '../../analysis/nextRound.js';
import { MISTYPED_ACTION, refusalGroups } from '../roundNotes.js';
import {
  raisedAlerts,
  type BarnReport,
  type PositiveRaised,
  type RoundAlertFacts,
  type SpatialRaised,
} from '../../alerts/roundAlerts.js';
import { escapeHtml } from './escape.js';
import { count } from './page.js';
import { formatJoinCountP, formatPValue, formatPercent } from '../../util/format.js';

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
      `join count ${jc.bb} positive\u2013positive joins against ${jc.expectedBB.toFixed(2)} expected, ${formatJoinCountP(jc.inference.method, jc.pPermutation)}`,
    );
    Object.assign(numbers, { joinCountBB: jc.bb, joinCountExpected: jc.expectedBB, joinCountP: jc.pPermutation });
  }
  const scan = report?.scan?.mostLikely ?? null;
  // The scan statistic only where the join count could not be computed: one statistic per alert, the cluster review has both.
  if (scan && positivePens.length >= 2 && !jc) {
    stats.push(
      `scan statistic: ${scan.positives} positive in ${count(scan.pens.length, 'rope')} around ${scan.centre}, ${scan.expected.toFixed(2)} expected, p = ${formatPValue(scan.p)}`,
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

/** A positive barn: what to do first, then the counts, the history and the statistic behind it. */
function positiveAlert(raised: PositiveRaised): PageAlert {
  const { kind, assay, barn, tally, previousPositive: before } = raised;
  const antibody = assay.measure === 'sp-ratio';
  const { where, stats, numbers } = positiveWhere(tally.positivePens, raised.report, raised.clustered);
  // An antibody positive means exposure (infection or vaccination), not necessarily virus now;
  // an unexpected one is retested by PCR (common practice, no source).
  const todo = antibody
    ? 'retest these pens by PCR and tell the herd veterinarian'
    : 'tell the herd veterinarian today';
  const notifiable = assay.notifiable ? '; notifiable: report it to the competent authority under local rules' : '';
  const label = antibody ? `Antibody to ${assay.name}` : `Positive ${assay.name}`;
  const first = kind === 'first-positive' ? ' (first on this site)' : kind === 'positive-again' ? ' again' : '';
  const action = `${label} in ${barn.name}${first}: ${count(tally.positive, 'pen')}${where}; ${todo}${notifiable}`;
  const history =
    kind === 'first-positive'
      ? `first ${assay.name} positive on this site`
      : kind === 'positive-again'
        ? `${before} positive in the previous round`
        : raised.testedBefore
          ? 'had none in the previous round'
          : `${assay.id} was not tested in the previous round`;
  const exposure = antibody
    ? ' Antibody means exposure, not necessarily current infection: retest these pens by PCR.'
    : '';
  const detail = `${tally.positive} of ${count(tally.tested, 'tested pen')} ${assay.id} positive${where === '' || where.startsWith(', scattered') ? ` (${tally.positivePens.join(', ')})` : ''}; ${history}${stats.length > 0 ? `; ${stats.join('; ')}` : ''}.${exposure}`;
  return alert(
    kind,
    assay.id,
    barn.barnId,
    action,
    detail,
    { positive: tally.positive, tested: tally.tested, previousPositive: before, ...numbers },
    tally.positivePens,
  );
}

/** A spatial alert of its own: the action by kind, the spatial analysis's message as the detail. */
function spatialAlert({ kind, entry, barnName }: SpatialRaised): PageAlert {
  const action =
    kind === 'significant-cluster'
      ? `${entry.assayId} positives cluster in ${barnName}: tell the herd veterinarian and look at the cluster review`
      : kind === 'spread'
        ? `${entry.assayId} is moving pen to pen in ${barnName}: tell the herd veterinarian; the next round follows it up`
        : `New ${entry.assayId} focus in ${barnName}, away from earlier positives: ask how it got there (people, feed, transport)`;
  return alert(kind, entry.assayId, entry.barnId, action, entry.message);
}

function freedomResetAlert(assay: RoundSummary['assays'][number], summary: RoundSummary): PageAlert {
  const numbers = { priorFreedom: assay.site.priorFreedom, startsFrom: summary.program.priorFreedom };
  if (assay.measure === 'sp-ratio') {
    const pcr =
      assay.pairedWith === null
        ? 'the PCR assay'
        : (summary.assays.find((other) => other.id === assay.pairedWith)?.name ?? assay.pairedWith);
    return alert(
      'freedom-reset',
      assay.id,
      null,
      `Freedom from exposure to ${assay.name} (antibody) is lost with this round`,
      `It was ${formatPercent(assay.site.priorFreedom)} before this round and starts again from the prior. The freedom of ${pcr} is not reset: antibody means exposure, not necessarily current infection.`,
      numbers,
    );
  }
  const { clearAfterNegativeRounds } = summary.program;
  return alert(
    'freedom-reset',
    assay.id,
    null,
    `Freedom from ${assay.name} is lost with this round: the site is positive${assay.site.status?.state === 'positive' ? ` since round ${assay.site.status.sinceRound}` : ''}`,
    `The probability of freedom was ${formatPercent(assay.site.priorFreedom)} before this round; it starts again from the prior ${formatPercent(summary.program.priorFreedom)} once every positive barn has had ${clearAfterNegativeRounds} negative round${clearAfterNegativeRounds === 1 ? '' : 's'} in a row.`,
    numbers,
  );
}

function callDiffersAlert(differing: RoundSummary['disagreements']): PageAlert {
  const perBarn = [...new Set(differing.map((entry) => entry.barnId))].map(
    (barnId) => `${barnId}: ${differing.filter((entry) => entry.barnId === barnId).length}`,
  );
  return alert(
    'call-differs',
    null,
    null,
    `Check the cutoffs in the lab profile against the lab\u2019s report before acting on ${differing.length === 1 ? 'this result' : 'these results'}`,
    `${count(differing.length, 'result')} where the lab's own call differs from the reading with the lab's cutoffs in the configuration (${perBarn.join(', ')}): ` +
      `each sample is listed with both readings under "Lab call and reading disagree".`,
    { results: differing.length },
    differing.map((entry) => entry.penId),
  );
}

type SummaryBarn = RoundSummary['barns'][number];

function invalidAlert(barn: SummaryBarn, tally: SummaryBarn['assays'][number]): PageAlert {
  return alert(
    'invalid',
    tally.assayId,
    barn.barnId,
    `Retest ${tally.invalidPens.join(', ')} in ${barn.name} for ${tally.assayId}`,
    `${count(tally.invalid, 'invalid result')} for ${tally.assayId} in barn ${barn.barnId} (${tally.invalidPens.join(', ')}): an invalid result is neither negative nor positive, and lowers the detection confidence.`,
    { invalid: tally.invalid },
    tally.invalidPens,
  );
}

function suspectAlert(barn: SummaryBarn, tally: SummaryBarn['assays'][number]): PageAlert {
  const near =
    tally.confidence.measure === 'sp-ratio'
      ? 'an S/P just below the positive cutoff'
      : 'a high Ct just above the positive cutoff';
  return alert(
    'suspect',
    tally.assayId,
    barn.barnId,
    `Consider retesting ${tally.suspectPens.join(', ')} in ${barn.name} (suspect ${tally.assayId})`,
    `${count(tally.suspect, 'suspect result')} for ${tally.assayId} in barn ${barn.barnId} (${tally.suspectPens.join(', ')}): ${near}; usually retested.`,
    { suspect: tally.suspect },
    tally.suspectPens,
  );
}

function mistypedAlert(barn: SummaryBarn): PageAlert {
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
  return alert(
    'mistyped-id',
    null,
    barn.barnId,
    `Confirm ${barn.mistyped.length === 1 ? 'a sample ID' : `${barn.mistyped.length} sample IDs`} in ${barn.name}: to count ${barn.mistyped.length === 1 ? 'it' : 'them'}, ${MISTYPED_ACTION}`,
    `${count(barn.mistyped.length, 'result')} in barn ${barn.barnId} refused under a mistyped ID (${ropes.join('; ')}): not counted until a person confirms the ID; the line to add is under barn ${barn.barnId}.`,
    { mistyped: barn.mistyped.length },
    barn.mistyped.map((rope) => rope.penId),
  );
}

function missingAlert(barn: SummaryBarn, missing: readonly string[]): PageAlert {
  return alert(
    'missing-ropes',
    null,
    barn.barnId,
    `Ask the producer and the lab about ${count(missing.length, 'rope')} of ${barn.name} without a result`,
    // ropesHung counts the planned ropes too: returned + missing + mistyped = hung, so the numbers add up.
    `${count(missing.length, 'rope')} in barn ${barn.barnId} without a result (${missing.join(', ')}): ${barn.ropesReturned} of ${barn.ropesHung} ropes on sheets or plans came back` +
      `${barn.mistyped.length > 0 ? ` and ${barn.mistyped.length} under a mistyped ID` : ''}; missing ropes lower the detection confidence.`,
    { missing: missing.length, returned: barn.ropesReturned, hung: barn.ropesHung },
  );
}

function lateAlert(days: number, intervalDays: number): PageAlert {
  return alert(
    'late-round',
    null,
    null,
    'Keep to the round interval: this round came late',
    `It started ${days} days after the previous one; the program interval is ${intervalDays} days. Introduction risk accrued over the extra ${days - intervalDays} days.`,
    { days, intervalDays },
  );
}

function overdueAlert(plan: NextRoundPlan): PageAlert {
  return alert(
    'overdue',
    null,
    null,
    `Hang the ropes of round ${plan.round} now: it is overdue`,
    `Round ${plan.round} was due on ${plan.dueDate}, ${count(plan.daysOverdue, 'day')} ago.`,
    { daysOverdue: plan.daysOverdue },
  );
}

/** One raised alert in words. */
function wordAlert(raised: RoundAlertFacts, summary: RoundSummary): PageAlert {
  switch (raised.kind) {
    case 'first-positive':
    case 'new-positive-barn':
    case 'positive-again':
      return positiveAlert(raised);
    case 'significant-cluster':
    case 'spread':
    case 'new-focus':
      return spatialAlert(raised);
    case 'freedom-reset':
      return freedomResetAlert(raised.assay, summary);
    case 'call-differs':
      return callDiffersAlert(raised.disagreements);
    case 'invalid':
      return invalidAlert(raised.barn, raised.tally);
    case 'suspect':
      return suspectAlert(raised.barn, raised.tally);
    case 'mistyped-id':
      return mistypedAlert(raised.barn);
    case 'missing-ropes':
      return missingAlert(raised.barn, raised.missing);
    case 'late-round':
      return lateAlert(raised.days, summary.program.intervalDays);
    case 'overdue':
      return overdueAlert(raised.plan);
  }
}

/**
 * The alerts of round `index` of a site, in words: which alerts the round raises, and in what
 * order, is decided in src/alerts/roundAlerts.ts (`raisedAlerts`); each is worded here.
 * @param summaries every round summary of the site, in order
 * @param spatial the spatial analysis of the same rounds (same order)
 * @param index the round to describe, an integer in [0, summaries.length - 1]
 * @param plan the next-round plan, given only for the latest round
 * @throws RangeError when `index` is out of range
 */
export function roundAlerts(
  summaries: readonly RoundSummary[],
  spatial: readonly (RoundSpatial | undefined)[],
  index: number,
  plan?: NextRoundPlan,
): PageAlert[] {
  return raisedAlerts(summaries, spatial, index, plan).map((raised) => wordAlert(raised, summaries[index]!));
}

/**
 * Every round's alerts of a site, in round order: the pages, the digest and the alert records
 * read the same list, built once (each round's alerts look back over the rounds before it). The
 * plan's overdue alert belongs to the latest round.
 */
export function alertsOfRounds(analysis: AlertAnalysis): PageAlert[][] {
  return analysis.summaries.map((_, index) => alertsOfRound(analysis, index));
}

/** What a site's alerts are read from. */
interface AlertAnalysis {
  summaries: readonly RoundSummary[];
  spatial: readonly (RoundSpatial | undefined)[];
  plan: NextRoundPlan;
}

/** The alerts of round `index` of a site: the latest round's carry the plan's overdue alert. */
export function alertsOfRound(analysis: AlertAnalysis, index: number): PageAlert[] {
  const latest = index === analysis.summaries.length - 1;
  return roundAlerts(analysis.summaries, analysis.spatial, index, latest ? analysis.plan : undefined);
}
