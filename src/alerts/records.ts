/**
 * Alerts as records people and programs receive: each alert of a round (the objects the pages
 * show, from src/report/html/alerts.ts, consumed as they are) with a stable key and the numbers
 * behind it. Pure: the same analysis gives the same records.
 *
 * The key is what makes an alert "the same" across rebuilds of a site's outputs (a catch-up, a
 * changed configuration, a later file): site, round id, assay, kind and subject (the barn, or
 * "-" for the site). Its message may change as results arrive; its key does not, so it is
 * delivered once.
 */
import type { NextRoundPlan } from '../analysis/nextRound.js';
import type { RoundSummary } from '../analysis/roundSummary.js';
import type { RoundSpatial } from '../analysis/spatialRound.js';
import type { PageAlert } from '../report/html/alerts.js';

export const ALERT_RECORD_SCHEMA = 'ropewatch.alert/1';

/** outbox/<site>/alerts.json: every alert of every round of the site, as records (written in src/outputs.ts). */
export const SITE_ALERTS_FILE = 'alerts.json';
export const SITE_ALERTS_SCHEMA = 'ropewatch.site-alerts/1';

/** What a number behind an alert is: a count, a probability, a day count or a date. */
export type AlertNumbers = Record<string, number | string | null>;

export interface AlertRecord {
  schema: typeof ALERT_RECORD_SCHEMA;
  /** `site/round id/assay/kind/subject`, "-" for no assay or no subject. */
  key: string;
  site: { id: string; name: string };
  round: { number: number; id: string; startOn: string; endOn: string };
  /** No result of the round has come back yet (only its rope sheet): its ropes are not missing, they are on their way. */
  awaitingResults: boolean;
  assay: string | null;
  barn: string | null;
  kind: PageAlert['kind'];
  /** What to do, in plain words; `detail` gives the statistic or the counts behind it; `message` is both. */
  action: string;
  detail: string;
  message: string;
  numbers: AlertNumbers;
}

/** The parts of a site's analysis the records are built from. */
export interface AlertSource {
  site: { id: string; name: string };
  summaries: readonly RoundSummary[];
  spatial: readonly (RoundSpatial | undefined)[];
  plan: NextRoundPlan;
}

/** The stable key of an alert (see the module comment). */
export function alertKey(
  siteId: string,
  roundId: string,
  assayId: string | null,
  kind: string,
  subject: string | null,
): string {
  return [siteId, roundId, assayId ?? '-', kind, subject ?? '-'].join('/');
}

/** The numbers the alert's words rest on, read from the round's summary and spatial analysis. */
function numbersOf(
  alert: PageAlert,
  summary: RoundSummary,
  spatial: RoundSpatial | undefined,
  plan: NextRoundPlan | undefined,
): AlertNumbers {
  const numbers: AlertNumbers = {};
  const siteAssay = alert.assayId === null ? undefined : summary.assays.find((assay) => assay.id === alert.assayId);
  const barn = alert.barnId === null ? undefined : summary.barns.find((entry) => entry.barnId === alert.barnId);
  if (barn !== undefined) {
    Object.assign(numbers, {
      ropesHung: barn.ropesHung,
      ropesReturned: barn.ropesReturned,
      missingRopes: barn.missingSampleIds.length,
    });
    const tally = barn.assays.find((entry) => entry.assayId === alert.assayId);
    if (tally !== undefined) {
      Object.assign(numbers, {
        tested: tally.tested,
        positive: tally.positive,
        suspect: tally.suspect,
        negative: tally.negative,
        invalid: tally.invalid,
        detectionConfidence: tally.confidence.detectionConfidence,
      });
    }
  } else if (siteAssay !== undefined) {
    const tallies = summary.barns.flatMap((entry) => entry.assays.filter((tally) => tally.assayId === siteAssay.id));
    Object.assign(numbers, {
      tested: tallies.reduce((sum, tally) => sum + tally.tested, 0),
      positive: tallies.reduce((sum, tally) => sum + tally.positive, 0),
      positiveBarns: siteAssay.site.positiveBarns.length,
    });
  }
  if (siteAssay !== undefined) {
    Object.assign(numbers, {
      siteDetectionConfidence: siteAssay.site.detectionConfidence,
      priorFreedom: siteAssay.site.priorFreedom,
      freedom: siteAssay.site.freedom,
    });
  }
  if ((alert.kind === 'significant-cluster' || alert.kind === 'positive-again') && alert.barnId !== null) {
    const report = spatial?.assays
      .find((assay) => assay.assayId === alert.assayId)
      ?.report.barns.find((entry) => entry.barn === alert.barnId);
    const jc = report?.joinCount ?? null;
    if (jc !== null)
      Object.assign(numbers, {
        joinsPositivePositive: jc.bb,
        joinsExpected: jc.expectedBB,
        joinCountP: jc.pPermutation,
      });
    if (report?.scan?.mostLikely)
      Object.assign(numbers, { scanP: report.scan.mostLikely.p, scanRopes: report.scan.mostLikely.pens.length });
  }
  if (alert.kind === 'call-differs') numbers.resultsDiffering = summary.disagreements.length;
  if (alert.kind === 'late-round') {
    numbers.daysSincePrevious =
      summary.assays.map((assay) => assay.site.daysSincePrevious).find((value) => value !== null) ?? null;
    numbers.intervalDays = summary.program.intervalDays;
  }
  if (alert.kind === 'overdue' && plan !== undefined)
    Object.assign(numbers, { nextRound: plan.round, dueDate: plan.dueDate, daysOverdue: plan.daysOverdue });
  return numbers;
}

/**
 * The alerts of round `index` as records, in the order the page shows them. Two alerts of one
 * round that would share a key (none do today) get `#2`, `#3` after it rather than hiding one
 * another. The plan's numbers go with the latest round's overdue alert.
 */
export function roundAlertRecords(source: AlertSource, index: number, alerts: readonly PageAlert[]): AlertRecord[] {
  const summary = source.summaries[index]!;
  const plan = index === source.summaries.length - 1 ? source.plan : undefined;
  const seen = new Map<string, number>();
  const awaitingResults =
    summary.barns.every((barn) => barn.ropesReturned === 0) &&
    summary.barns.every((barn) => barn.mistyped.length === 0);
  return alerts.map((alert) => {
    const base = alertKey(source.site.id, summary.round.id, alert.assayId, alert.kind, alert.barnId);
    const times = (seen.get(base) ?? 0) + 1;
    seen.set(base, times);
    return {
      schema: ALERT_RECORD_SCHEMA,
      key: times === 1 ? base : `${base}#${times}`,
      site: { id: source.site.id, name: source.site.name },
      round: {
        number: summary.round.number,
        id: summary.round.id,
        startOn: summary.round.startOn,
        endOn: summary.round.endOn,
      },
      awaitingResults,
      assay: alert.assayId,
      barn: alert.barnId,
      kind: alert.kind,
      action: alert.action,
      detail: alert.detail,
      message: alert.message,
      // The page's alert carries the numbers its words quote; the round's context is added around them.
      numbers: { ...numbersOf(alert, summary, source.spatial[index], plan), ...alert.numbers },
    };
  });
}
