/**
 * The next round's plan for a site: routine systematic ropes, retests and follow-up ropes per
 * barn, each with a sample ID, in the order a person walks the barn.
 *
 * Walking order: alley by alley; up the first side of the alley (row 0, or row 2, position
 * ascending) and back down the other (row 1, or row 3, position descending), so the walk ends
 * where it began, at the barn's entry end, which is how staff work with a cart of bags and tubes
 * (common practice, no source). Barns in input order. Sample sequences run 1, 2, ... through the
 * whole plan in that order, skipping any sequence whose check character would be I, O or L.
 */
import { expandLayout, penContacts, type BarnLayout, type Pen } from '../domain/layout.js';
import { requireInteger } from '../stats/validate.js';
import { planFollowUp } from './followUp.js';
import { planMonitoredBarn, type PlanReason } from './monitoring.js';
import type { BarnPlanNote } from './barnNotes.js';
import { type CoverageRounds, coverageRounds, placeSystematic, placementDistances } from './placement.js';
import { formatSampleId, isWriteFriendlyCheck } from './sampleId.js';

export interface BarnRoundInput {
  barnId: string;
  layout: BarnLayout;
  /** Round index for the rotation of the systematic layer (0, 1, 2, ...). */
  roundIndex: number;
  /** Routine (systematic) ropes, integer in [0, in-use pens]. */
  routineRopes: number;
  /** Positive pens of the last round (each a cluster of its own unless named in `clusters`). */
  positives?: readonly string[];
  suspects?: readonly string[];
  invalids?: readonly string[];
  clusters?: readonly (readonly string[])[];
  /** Ring radius for follow-up, pen units; default 0 (contacts only). */
  ringDistance?: number;
  maxExtraRopes?: number;
  detectSet?: (penIds: readonly string[]) => number;
  /** A periodicity along the rows in pens (e.g. 4: every fourth pen a hospital pen). */
  period?: number;
  /**
   * The barn is positive: monitored instead of surveyed (src/plan/monitoring.ts). Its routine
   * ropes are then 0; positive pens are re-roped and a fixed tracking set replaces the rotation.
   */
  monitoring?: { reRope: readonly string[]; trackingRopes: number };
}

export interface RoundPlanInput {
  siteCode: string;
  round: number;
  /** yyyy-mm-dd */
  dueDate: string;
  barns: readonly BarnRoundInput[];
}

export interface PlanRow {
  sampleId: string;
  siteId: string;
  barnId: string;
  penId: string;
  /** The row's label: the side of the alley. */
  side: string;
  reason: PlanReason;
  dueDate: string;
}

export interface BarnPlanSummary {
  barnId: string;
  ropes: number;
  routine: number;
  followUp: number;
  retest: number;
  /** A positive (monitored) barn: positive pens re-roped and ropes of the fixed tracking set. */
  reRope: number;
  tracking: number;
  /** Of all ropes in the barn, pen units; null without ropes. */
  coveringRadius: number | null;
  meanDistance: number | null;
  /** Of the systematic layer alone. */
  routineCoveringRadius: number | null;
  /** Rounds from this one until every in-use pen has had a routine rope; null without routine ropes. */
  coverageRounds: number | null;
  cycleLength: number;
  notes: BarnPlanNote[];
}

export interface RoundPlan {
  rows: PlanRow[];
  barns: BarnPlanSummary[];
}

/** Pens in walking order (see the module comment). */
export function walkingOrder(pens: readonly Pen[]): Pen[] {
  return [...pens].sort((a, b) => {
    const alley = Math.floor(a.row / 2) - Math.floor(b.row / 2);
    if (alley !== 0) return alley;
    if (a.row !== b.row) return a.row - b.row;
    return a.row % 2 === 0 ? a.position - b.position : b.position - a.position;
  });
}

function clustersOf(barn: BarnRoundInput): string[][] {
  const clusters = (barn.clusters ?? []).map((c) => [...c]);
  const named = new Set(clusters.flat());
  for (const id of barn.positives ?? []) if (!named.has(id)) clusters.push([id]);
  return clusters;
}

function validatePlanInput(input: RoundPlanInput): void {
  if (!/^\d{4}-\d{2}-\d{2}$/.test(input.dueDate))
    throw new RangeError(`\`dueDate\` must be a date yyyy-mm-dd, got ${JSON.stringify(input.dueDate)}`);
  requireInteger('round', input.round, 0, 9999);
  formatSampleId({ siteCode: input.siteCode, round: input.round, sequence: 1 }); // validates the site code
  const seen = new Set<string>();
  for (const barn of input.barns) {
    if (seen.has(barn.barnId))
      throw new RangeError(`\`barnId\` must be unique within the site, got ${JSON.stringify(barn.barnId)} twice`);
    seen.add(barn.barnId);
  }
}

/** The next write-friendly sample ID of the round, sequences 1, 2, ... (see the module comment). */
function sampleIdSequence(input: RoundPlanInput): () => string {
  let sequence = 0;
  return () => {
    for (;;) {
      sequence++;
      if (sequence > 999) throw new RangeError('`ropes` must be an integer in [0, 999] per site and round, got more');
      const id = formatSampleId({ siteCode: input.siteCode, round: input.round, sequence });
      if (isWriteFriendlyCheck(id)) return id;
    }
  };
}

/** The options the follow-up kernels share: contacts, clusters, retests, ring and the optional limits. */
function followUpOptions(barn: BarnRoundInput, pens: readonly Pen[]) {
  return {
    pens,
    contacts: penContacts(barn.layout, pens),
    clusters: clustersOf(barn),
    retest: [...new Set([...(barn.suspects ?? []), ...(barn.invalids ?? [])])],
    ringDistance: barn.ringDistance ?? 0,
    ...(barn.maxExtraRopes !== undefined ? { maxExtraRopes: barn.maxExtraRopes } : {}),
    ...(barn.detectSet ? { detectSet: barn.detectSet } : {}),
  };
}

/** One barn's ropes, each with its reason. */
interface BarnRopes {
  ropes: readonly { penId: string; reason: PlanReason }[];
}

/** The plan rows of one barn's ropes, in walking order, each with the next sample ID. */
function barnRows(
  input: RoundPlanInput,
  barn: BarnRoundInput,
  pens: readonly Pen[],
  planned: BarnRopes,
  nextId: () => string,
): PlanRow[] {
  const reasonOf = new Map(planned.ropes.map((r) => [r.penId, r.reason]));
  const rows: PlanRow[] = [];
  for (const pen of walkingOrder(pens)) {
    const reason = reasonOf.get(pen.id);
    if (!reason) continue;
    rows.push({
      sampleId: nextId(),
      siteId: input.siteCode.toUpperCase(),
      barnId: barn.barnId,
      penId: pen.id,
      side: pen.rowLabel,
      reason,
      dueDate: input.dueDate,
    });
  }
  return rows;
}

/** Rope counts by reason and the distances of all the barn's ropes. */
function ropeFigures(pens: readonly Pen[], planned: BarnRopes) {
  const count = (reason: PlanReason) => planned.ropes.filter((r) => r.reason === reason).length;
  const all = placementDistances(
    pens,
    planned.ropes.map((r) => r.penId),
  );
  return {
    ropes: planned.ropes.length,
    count,
    coveringRadius: all.coveringRadius,
    meanDistance: all.meanDistance,
  };
}

/** A positive barn: re-rope and tracking ropes instead of the rotation (src/plan/monitoring.ts). */
function monitoredBarnPlan(
  barn: BarnRoundInput,
  monitoring: NonNullable<BarnRoundInput['monitoring']>,
  pens: readonly Pen[],
): { planned: BarnRopes; summary: BarnPlanSummary } {
  const monitored = planMonitoredBarn({
    ...followUpOptions(barn, pens),
    reRope: monitoring.reRope,
    trackingRopes: monitoring.trackingRopes,
  });
  const figures = ropeFigures(pens, monitored);
  return {
    planned: monitored,
    summary: {
      barnId: barn.barnId,
      ropes: figures.ropes,
      routine: 0,
      followUp: figures.count('follow-up'),
      retest: figures.count('retest'),
      reRope: figures.count('re-rope'),
      tracking: figures.count('tracking'),
      coveringRadius: figures.coveringRadius,
      meanDistance: figures.meanDistance,
      routineCoveringRadius: monitored.trackingCoveringRadius,
      coverageRounds: null,
      cycleLength: 1,
      notes: monitored.notes,
    },
  };
}

/** The coverage of the rotation as a barn note. */
function coverageNote(ropes: number, coverage: CoverageRounds): BarnPlanNote {
  return {
    kind: 'coverage',
    ropes,
    inUsePens: coverage.inUsePens,
    rounds: coverage.rounds,
    cycleLength: coverage.cycleLength,
  };
}

/** A surveyed barn: the rotating systematic layer, then retest and follow-up ropes. */
function surveyedBarnPlan(
  barn: BarnRoundInput,
  pens: readonly Pen[],
): { planned: BarnRopes; summary: BarnPlanSummary } {
  const placement = placeSystematic(pens, {
    ropes: barn.routineRopes,
    roundIndex: barn.roundIndex,
    ...(barn.period !== undefined ? { period: barn.period } : {}),
  });
  const followUp = planFollowUp({ ...followUpOptions(barn, pens), routine: placement.penIds });
  const figures = ropeFigures(pens, followUp);
  const coverage = barn.routineRopes > 0 ? coverageRounds(pens, barn.routineRopes, barn.roundIndex) : null;
  return {
    planned: followUp,
    summary: {
      barnId: barn.barnId,
      ropes: figures.ropes,
      routine: figures.count('routine'),
      followUp: figures.count('follow-up'),
      retest: figures.count('retest'),
      reRope: 0,
      tracking: 0,
      coveringRadius: figures.coveringRadius,
      meanDistance: figures.meanDistance,
      routineCoveringRadius: placement.coveringRadius,
      coverageRounds: coverage?.rounds ?? null,
      cycleLength: placement.cycleLength,
      notes: [...placement.notes, ...followUp.notes, ...(coverage ? [coverageNote(barn.routineRopes, coverage)] : [])],
    },
  };
}

/**
 * Assembles the plan of one round for a site (see the module comment for the walking order and
 * the numbering; {@link placeSystematic} and {@link planFollowUp} for the choices).
 * @throws RangeError for a duplicate barn id, a malformed due date, a bad round or site code,
 *   more than 999 ropes, or any precondition of the kernels it calls
 * @see Cochran WG (1977) Sampling Techniques, ch. 8; ISO/IEC 7064:2003 MOD 37-2.
 */
export function buildRoundPlan(input: RoundPlanInput): RoundPlan {
  validatePlanInput(input);
  const nextId = sampleIdSequence(input);
  const rows: PlanRow[] = [];
  const barns: BarnPlanSummary[] = [];
  for (const barn of input.barns) {
    const pens = expandLayout(barn.layout);
    const { planned, summary } = barn.monitoring
      ? monitoredBarnPlan(barn, barn.monitoring, pens)
      : surveyedBarnPlan(barn, pens);
    rows.push(...barnRows(input, barn, pens, planned, nextId));
    barns.push(summary);
  }
  return { rows, barns };
}
