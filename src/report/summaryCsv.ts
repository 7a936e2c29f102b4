/**
 * summary.csv: one table with a `level` column (site, barn, pen) and one row per assay at each
 * level. Column names are stable and documented in the README; new columns go at the end.
 */
import { csvTable, type CsvRow } from './csvTable.js';
import type { RoundSummary, SourceSummary } from '../analysis/roundSummary.js';
import type { HerdStatus } from '../config/types.js';
import type { CtHistoryPoint, MistypedRope } from '../rounds/roundModel.js';
import { refusalGroups, replacementCell, simplyMissing } from './roundNotes.js';

export const SUMMARY_COLUMNS = [
  'level',
  'site',
  'round',
  'round_start',
  'round_end',
  'barn',
  'pen',
  'side',
  'assay',
  'pens_in_use',
  'ropes_hung',
  'ropes_returned',
  'missing_sample_ids',
  'tested',
  'positive',
  'suspect',
  'negative',
  'invalid',
  'positive_pens',
  'design_infected_pens',
  'rope_sensitivity',
  'detection_confidence',
  'target_confidence',
  'ropes_needed',
  'target_reachable',
  'freedom',
  'freedom_reset',
  'apparent_prevalence',
  'apparent_prevalence_low95',
  'apparent_prevalence_high95',
  'true_prevalence',
  'sample_ids',
  'class',
  'ct',
  'load_band',
  'reason',
  'ct_history',
  'lab_call',
  'call_differs',
  'lab',
  'accession',
  'collected_on',
  'reported_on',
  'positive_below',
  'suspect_below',
  'cycle_limit',
  'sequencing_candidate',
  'measure',
  'sp',
  'sp_history',
  'positive_at_or_above',
  'suspect_at_or_above',
  'corrections',
  'refused_mistyped_id',
  'likely_meant_id',
  'round_state',
  'results_due_on',
  'site_barns',
  'infected_barns',
  'detection_if_every_barn',
  'detection_if_infected_barns',
  'positive_since',
  'group',
  'group_placed_on',
  'barn_empty',
  'barn_freedom',
  'pool',
  'pools',
  'positive_pool_pens',
  'pool_sensitivity',
  'unpooled_detection_confidence',
  'herd_status',
  'herd_status_set_on',
  'herd_status_note',
] as const;

type Column = (typeof SUMMARY_COLUMNS)[number];
type Row = CsvRow<Column>;

/** Probabilities to six decimals: enough to compare, short enough to read. */
export function formatProbability(value: number): string {
  return value.toFixed(6);
}

/**
 * Dates as one cell: the date when first and last agree, else an ISO 8601 time interval
 * "first/last" (ISO 8601-1:2019, time intervals); empty when none is known.
 */
export function dateSpan(first: string | null, last: string | null): string | null {
  if (first === null || last === null) return first ?? last;
  return first === last ? first : `${first}/${last}`;
}

/** One point of a pen's history: its Ct, `ND` for not detected, `invalid` for a result that says nothing. */
export function historyCell(point: Pick<CtHistoryPoint, 'round' | 'ct' | 'resultClass'>): string {
  return `r${point.round}:${point.resultClass === 'invalid' ? 'invalid' : (point.ct ?? 'ND')}`;
}

/** One point of an antibody pen's history: its S/P, `invalid` for a result that says nothing (an S/P has no "not detected"). */
export function spHistoryCell(point: Pick<CtHistoryPoint, 'round' | 'sp' | 'resultClass'>): string {
  return `r${point.round}:${point.resultClass === 'invalid' || point.sp === null ? 'invalid' : point.sp}`;
}

/** The provenance cells of a site or barn row: labs, case numbers, collection and report dates of the reports behind it. */
function provenance(
  sources: readonly Pick<
    SourceSummary,
    'labName' | 'accessions' | 'reportedOn' | 'collectedFrom' | 'collectedTo' | 'assays'
  >[],
  assayId: string,
): Row {
  const of = sources.filter((source) => source.assays.includes(assayId));
  if (of.length === 0) return {};
  const sorted = (values: Iterable<string>) => [...new Set(values)].sort();
  const collected = sorted(
    of.flatMap((source) => [source.collectedFrom, source.collectedTo].filter((date): date is string => date !== null)),
  );
  const reported = sorted(of.flatMap((source) => (source.reportedOn === null ? [] : [source.reportedOn])));
  return {
    lab: sorted(of.map((source) => source.labName)).join('; '),
    accession: sorted(of.flatMap((source) => source.accessions)).join(' '),
    collected_on: dateSpan(collected[0] ?? null, collected.at(-1) ?? null),
    reported_on: dateSpan(reported[0] ?? null, reported.at(-1) ?? null),
  };
}

/**
 * The refused rows of some ropes as two aligned cells: each distinct ID as written, and the
 * planned ID it most likely meant at the same place in the other cell.
 */
function mistypedCells(ropes: readonly MistypedRope[]): Row {
  if (ropes.length === 0) return {};
  const pairs = ropes.flatMap((rope) =>
    [...new Set(refusalGroups(rope).map((group) => group.written))].map((written) => ({
      written,
      meant: rope.sampleId,
    })),
  );
  return {
    refused_mistyped_id: pairs.map((pair) => pair.written).join(' '),
    likely_meant_id: pairs.map((pair) => pair.meant).join(' '),
  };
}

/**
 * @param herdStatus the veterinarian's status of the herd (sites.yaml `herdStatus`): on the site
 *   rows, beside the numbers of the round
 */
export function summaryCsv(summary: RoundSummary, herdStatus?: HerdStatus): string {
  const herd: Row =
    herdStatus === undefined
      ? {}
      : {
          herd_status: herdStatus.category,
          herd_status_set_on: herdStatus.setOn,
          herd_status_note: herdStatus.note ?? null,
        };
  const base: Row = {
    site: summary.site.id,
    round: summary.round.number,
    round_start: summary.round.startOn,
    round_end: summary.round.endOn,
    round_state: summary.round.state,
    results_due_on: summary.round.resultsDueOn,
  };
  const rows: Row[] = [];
  // A round with no result back has no assay to give a row: one site row and one row per barn,
  // without an assay, say how many ropes are out (and, once closed, which are missing).
  if (summary.assays.length === 0) {
    const hung = summary.barns.reduce((sum, barn) => sum + barn.ropesHung, 0);
    rows.push({
      ...base,
      ...herd,
      level: 'site',
      pens_in_use: summary.barns.reduce((sum, barn) => sum + barn.pensInUse, 0),
      ropes_hung: hung,
      ropes_returned: 0,
      missing_sample_ids: summary.barns.flatMap((barn) => simplyMissing(barn)).join(' '),
    });
    for (const barn of summary.barns) {
      rows.push({
        ...base,
        level: 'barn',
        barn: barn.barnId,
        pens_in_use: barn.pensInUse,
        ropes_hung: barn.ropesHung,
        ropes_returned: barn.ropesReturned,
        missing_sample_ids: simplyMissing(barn).join(' '),
      });
    }
  }
  for (const assay of summary.assays) {
    const totals = summary.barns.reduce(
      (sum, barn) => {
        const entry = barn.assays.find((a) => a.assayId === assay.id)!;
        return {
          // An empty barn (between two groups of pigs) holds no pen in use that round.
          pens: sum.pens + (barn.empty ? 0 : barn.pensInUse),
          hung: sum.hung + barn.ropesHung,
          returned: sum.returned + barn.ropesReturned,
          tested: sum.tested + entry.tested,
          positive: sum.positive + entry.positive,
          suspect: sum.suspect + entry.suspect,
          negative: sum.negative + entry.negative,
          invalid: sum.invalid + entry.invalid,
        };
      },
      { pens: 0, hung: 0, returned: 0, tested: 0, positive: 0, suspect: 0, negative: 0, invalid: 0 },
    );
    rows.push({
      ...base,
      level: 'site',
      assay: assay.id,
      pens_in_use: totals.pens,
      ropes_hung: totals.hung,
      ropes_returned: totals.returned,
      missing_sample_ids: summary.barns.flatMap((barn) => simplyMissing(barn)).join(' '),
      tested: totals.tested,
      positive: totals.positive,
      suspect: totals.suspect,
      negative: totals.negative,
      invalid: totals.invalid,
      detection_confidence: formatProbability(assay.site.detectionConfidence),
      target_confidence: summary.program.targetConfidence,
      // A site positive for a PCR assay has a status, not a probability of freedom.
      freedom:
        assay.site.status?.state === 'positive' || assay.site.freedom === null
          ? 'positive'
          : formatProbability(assay.site.freedom),
      positive_since: assay.site.status?.state === 'positive' ? assay.site.status.sinceRound : null,
      unpooled_detection_confidence:
        assay.site.unpooledDetectionConfidence === undefined
          ? null
          : formatProbability(assay.site.unpooledDetectionConfidence),
      freedom_reset: assay.site.freedomReset,
      ...provenance(summary.sources, assay.id),
      site_barns: assay.site.barns,
      infected_barns: assay.site.fewInfectedBarns,
      detection_if_every_barn: formatProbability(assay.site.detectionIfEveryBarn),
      detection_if_infected_barns: formatProbability(assay.site.detectionIfFewBarns),
      measure: assay.measure,
      ...mistypedCells(summary.barns.flatMap((barn) => barn.mistyped)),
      ...herd,
    });
  }
  for (const barn of summary.barns) {
    const group: Row = barn.group === null ? {} : { group: barn.group.id, group_placed_on: barn.group.placedOn };
    for (const entry of barn.assays) {
      const c = entry.confidence;
      if (barn.empty) {
        // An empty barn (between a group's close-out and the next placement): no figure, nothing missing.
        rows.push({
          ...base,
          level: 'barn',
          barn: barn.barnId,
          assay: entry.assayId,
          pens_in_use: 0,
          ropes_hung: barn.ropesHung,
          ropes_returned: barn.ropesReturned,
          measure: c.measure,
          barn_empty: true,
        });
        continue;
      }
      rows.push({
        ...base,
        level: 'barn',
        barn: barn.barnId,
        assay: entry.assayId,
        pens_in_use: barn.pensInUse,
        ropes_hung: barn.ropesHung,
        ropes_returned: barn.ropesReturned,
        missing_sample_ids: simplyMissing(barn).join(' '),
        tested: entry.tested,
        positive: entry.positive,
        suspect: entry.suspect,
        negative: entry.negative,
        invalid: entry.invalid,
        positive_pens: entry.positivePens.join(' '),
        design_infected_pens: c.designInfected,
        rope_sensitivity: c.sensitivity,
        detection_confidence: formatProbability(c.detectionConfidence),
        target_confidence: summary.program.targetConfidence,
        ropes_needed: c.ropesNeeded,
        target_reachable: c.targetReachable,
        apparent_prevalence: c.prevalence ? formatProbability(c.prevalence.apparent) : null,
        apparent_prevalence_low95: c.prevalence ? formatProbability(c.prevalence.lower95) : null,
        apparent_prevalence_high95: c.prevalence ? formatProbability(c.prevalence.upper95) : null,
        true_prevalence: c.prevalence ? formatProbability(c.prevalence.trueEstimate) : null,
        freedom: c.status?.state === 'positive' ? 'positive' : null,
        positive_since: c.status?.state === 'positive' ? c.status.sinceRound : null,
        pools: c.pooled?.pools ?? null,
        positive_pool_pens: c.pooled === undefined ? null : (entry.positivePoolPens ?? []).join(' '),
        pool_sensitivity: c.pooled?.poolSensitivity ?? null,
        unpooled_detection_confidence:
          c.pooled === undefined ? null : formatProbability(c.pooled.unpooledDetectionConfidence),
        ...provenance(barn.sources, entry.assayId),
        measure: c.measure,
        ...mistypedCells(barn.mistyped),
        ...group,
        barn_empty: false,
        barn_freedom:
          c.status?.state === 'positive' ? 'positive' : c.freedom === null ? null : formatProbability(c.freedom),
      });
    }
  }
  const groupOfBarn = new Map(summary.barns.map((barn) => [barn.barnId, barn.group]));
  for (const pen of summary.pens) {
    const group = groupOfBarn.get(pen.barnId) ?? null;
    for (const [assayId, result] of Object.entries(pen.results)) {
      const antibody = result.measure === 'sp-ratio';
      rows.push({
        ...base,
        level: 'pen',
        barn: pen.barnId,
        pen: pen.penId,
        side: pen.side,
        assay: assayId,
        sample_ids: pen.sampleIds.join(' '),
        class: result.resultClass,
        pool: result.pool?.poolId ?? null,
        ct: result.ct,
        load_band: result.loadBand,
        reason: result.reason,
        ct_history: antibody ? null : result.history.map(historyCell).join(' '),
        lab_call: result.labCall,
        call_differs: result.callDiffers,
        lab: result.labName,
        accession: result.accession,
        collected_on: result.collectedOn,
        reported_on: result.reportedOn,
        positive_below: result.positiveBelow,
        suspect_below: result.suspectBelow,
        cycle_limit: result.cycleLimit,
        sequencing_candidate: result.sequencingCandidate,
        measure: result.measure,
        sp: result.sp,
        sp_history: antibody ? result.history.map(spHistoryCell).join(' ') : null,
        positive_at_or_above: result.positiveAtOrAbove,
        suspect_at_or_above: result.suspectAtOrAbove,
        corrections: summary.replaced
          .filter((entry) => entry.barnId === pen.barnId && entry.penId === pen.penId && entry.assayId === assayId)
          .map(replacementCell)
          .join('; '),
        ...(group === null ? {} : { group: group.id, group_placed_on: group.placedOn }),
      });
    }
  }
  // A pen whose result came back under a mistyped ID has no result to show: one row, no assay.
  for (const barn of summary.barns) {
    for (const rope of barn.mistyped) {
      rows.push({
        ...base,
        level: 'pen',
        barn: barn.barnId,
        pen: rope.penId,
        side: rope.side,
        sample_ids: rope.sampleId,
        reason: 'result refused: mistyped ID?',
        ...mistypedCells([rope]),
      });
    }
  }
  return csvTable(SUMMARY_COLUMNS, rows);
}
