/**
 * The rows of summary.csv, level by level: the site (one row per assay, or one without an assay
 * while no result is back), each barn per assay, each pen per result, and each pen whose result
 * was refused under a mistyped ID.
 */
import type { RoundSummary } from '../analysis/roundSummary.js';
import type { HerdStatus } from '../config/types.js';
import { replacementCell, simplyMissing } from './roundNotes.js';
import { siteRopes, siteTally } from './siteTally.js';
import {
  formatProbability,
  historyCell,
  mistypedCells,
  provenance,
  spHistoryCell,
  SUMMARY_TABLE,
  type SummaryCells as Cells,
  type SummaryRow as Row,
} from './summaryColumns.js';

/** The cells every row of a round starts with. */
export function roundCells(summary: RoundSummary): Row {
  return {
    site: summary.site.id,
    round: summary.round.number,
    round_start: summary.round.startOn,
    round_end: summary.round.endOn,
    round_state: summary.round.state,
    results_due_on: summary.round.resultsDueOn,
  };
}

/** The veterinarian's status of the herd (sites.yaml `herdStatus`), on the site rows. */
function herdCells(herdStatus: HerdStatus | undefined): Row {
  return herdStatus === undefined
    ? {}
    : {
        herd_status: herdStatus.category,
        herd_status_set_on: herdStatus.setOn,
        herd_status_note: herdStatus.note ?? null,
      };
}

/**
 * A round with no result back has no assay to give a row: one site row and one row per barn,
 * without an assay, say how many ropes are out (and, once closed, which are missing).
 */
function noResultRows(summary: RoundSummary, base: Cells, herd: Row): Cells[] {
  const rows: Cells[] = [
    SUMMARY_TABLE.over(base, {
      ...herd,
      level: 'site',
      // Every barn's pens, as written before any result came back (the assay rows leave out an empty barn's).
      pens_in_use: summary.barns.reduce((sum, barn) => sum + barn.pensInUse, 0),
      ropes_hung: siteRopes(summary).hung,
      ropes_returned: 0,
      missing_sample_ids: summary.barns.flatMap((barn) => simplyMissing(barn)).join(' '),
    }),
  ];
  for (const barn of summary.barns) {
    rows.push(
      SUMMARY_TABLE.over(base, {
        level: 'barn',
        barn: barn.barnId,
        pens_in_use: barn.pensInUse,
        ropes_hung: barn.ropesHung,
        ropes_returned: barn.ropesReturned,
        missing_sample_ids: simplyMissing(barn).join(' '),
      }),
    );
  }
  return rows;
}

/** One site row per assay: the site's counts, detection, freedom and where the results came from. */
function siteRow(summary: RoundSummary, assay: RoundSummary['assays'][number], base: Cells, herd: Row): Cells {
  const totals = siteTally(summary, assay.id);
  return SUMMARY_TABLE.over(base, {
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

/** The site rows of a round: one per assay, or the rows without an assay while no result is back. */
export function siteRows(summary: RoundSummary, herdStatus: HerdStatus | undefined): Cells[] {
  const base = SUMMARY_TABLE.cells(roundCells(summary));
  const herd = herdCells(herdStatus);
  return [
    ...(summary.assays.length === 0 ? noResultRows(summary, base, herd) : []),
    ...summary.assays.map((assay) => siteRow(summary, assay, base, herd)),
  ];
}

type SummaryBarn = RoundSummary['barns'][number];
const AT = SUMMARY_TABLE.place;

/** One barn row of one assay: counts, detection against the target, prevalence, pools, freedom. */
function barnRow(summary: RoundSummary, barn: SummaryBarn, entry: SummaryBarn['assays'][number], base: Cells): Cells {
  const c = entry.confidence;
  return SUMMARY_TABLE.over(base, {
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
    // Blank without a group (the round's cells leave them blank).
    group: barn.group?.id,
    group_placed_on: barn.group?.placedOn,
    barn_empty: false,
    barn_freedom:
      c.status?.state === 'positive' ? 'positive' : c.freedom === null ? null : formatProbability(c.freedom),
  });
}

/** The barn rows of a round, one per barn and assay; an empty barn (between a group's close-out and the next placement): no figure, nothing missing. */
export function barnRows(summary: RoundSummary): Cells[] {
  const base = SUMMARY_TABLE.cells(roundCells(summary));
  return summary.barns.flatMap((barn) =>
    barn.assays.map((entry) =>
      barn.empty
        ? SUMMARY_TABLE.over(base, {
            level: 'barn',
            barn: barn.barnId,
            assay: entry.assayId,
            pens_in_use: 0,
            ropes_hung: barn.ropesHung,
            ropes_returned: barn.ropesReturned,
            measure: entry.confidence.measure,
            barn_empty: true,
          })
        : barnRow(summary, barn, entry, base),
    ),
  );
}

/** A pen and assay as one key (ids hold no line breaks). */
export function penAssayKey(barnId: string, penId: string, assayId: string): string {
  return `${barnId}\n${penId}\n${assayId}`;
}

/**
 * The corrections cell of each pen and assay with replaced reports in the round: their cells in
 * the round's order, joined. Made once per round; a pen row then looks its cell up instead of
 * searching the round's replaced reports.
 */
export function correctionsByPenAssay(replaced: readonly RoundSummary['replaced'][number][]): Map<string, string> {
  const cells = new Map<string, string>();
  for (const entry of replaced) {
    const key = penAssayKey(entry.barnId, entry.penId, entry.assayId);
    const before = cells.get(key);
    cells.set(key, before === undefined ? replacementCell(entry) : `${before}; ${replacementCell(entry)}`);
  }
  return cells;
}

/**
 * One pen row per result: the reading, its history, the lab and cutoffs, corrections; then one
 * row per pen whose result was refused under a mistyped ID. Pen rows are most of the table:
 * their cells are set by column place, with no object per row.
 */
export function penRows(summary: RoundSummary): Cells[] {
  const base = SUMMARY_TABLE.cells(roundCells(summary));
  const rows: Cells[] = [];
  const groupOfBarn = new Map(summary.barns.map((barn) => [barn.barnId, barn.group]));
  const corrections = correctionsByPenAssay(summary.replaced);
  for (const pen of summary.pens) {
    const group = groupOfBarn.get(pen.barnId) ?? null;
    for (const [assayId, result] of Object.entries(pen.results)) {
      const antibody = result.measure === 'sp-ratio';
      const cells = base.slice();
      cells[AT.level] = 'pen';
      cells[AT.barn] = pen.barnId;
      cells[AT.pen] = pen.penId;
      cells[AT.side] = pen.side;
      cells[AT.assay] = assayId;
      cells[AT.sample_ids] = pen.sampleIds.join(' ');
      cells[AT.class] = result.resultClass;
      cells[AT.pool] = result.pool?.poolId ?? null;
      cells[AT.ct] = result.ct;
      cells[AT.load_band] = result.loadBand;
      cells[AT.reason] = result.reason;
      cells[AT.ct_history] = antibody ? null : result.history.map(historyCell).join(' ');
      cells[AT.lab_call] = result.labCall;
      cells[AT.call_differs] = result.callDiffers;
      cells[AT.lab] = result.labName;
      cells[AT.accession] = result.accession;
      cells[AT.collected_on] = result.collectedOn;
      cells[AT.reported_on] = result.reportedOn;
      cells[AT.positive_below] = result.positiveBelow;
      cells[AT.suspect_below] = result.suspectBelow;
      cells[AT.cycle_limit] = result.cycleLimit;
      cells[AT.sequencing_candidate] = result.sequencingCandidate;
      cells[AT.measure] = result.measure;
      cells[AT.sp] = result.sp;
      cells[AT.sp_history] = antibody ? result.history.map(spHistoryCell).join(' ') : null;
      cells[AT.positive_at_or_above] = result.positiveAtOrAbove;
      cells[AT.suspect_at_or_above] = result.suspectAtOrAbove;
      cells[AT.corrections] = corrections.get(penAssayKey(pen.barnId, pen.penId, assayId)) ?? '';
      // Blank without a group (the round's cells leave them blank).
      cells[AT.group] = group?.id;
      cells[AT.group_placed_on] = group?.placedOn;
      rows.push(cells);
    }
  }
  // A pen whose result came back under a mistyped ID has no result to show: one row, no assay.
  for (const barn of summary.barns) {
    for (const rope of barn.mistyped) {
      rows.push(
        SUMMARY_TABLE.over(base, {
          level: 'pen',
          barn: barn.barnId,
          pen: rope.penId,
          side: rope.side,
          sample_ids: rope.sampleId,
          reason: 'result refused: mistyped ID?',
          ...mistypedCells([rope]),
        }),
      );
    }
  }
  return rows;
}
