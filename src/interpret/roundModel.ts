/**
 * The round model: for one site, every round with its barns, pens and per-assay results. This
 * plain value is what statistics, spatial analysis, planning and reports all read. Pure.
 */
import type { Barn, Site } from '../config/types.js';
import { CLASS_SEVERITY, type ResultClass } from './classify.js';
import { formRounds, type DatedRope } from './rounds.js';

export interface ResultInput {
  id: number;
  labId: string;
  sampleId: string;
  assayId: string;
  ct: number | null;
  resultClass: ResultClass;
  reason: string;
  loadBand: string | null;
  cycleLimit: number;
  callDiffers: boolean;
  labCall: string | null;
}

export interface PenAssayResult {
  assayId: string;
  resultClass: ResultClass;
  ct: number | null;
  loadBand: string | null;
  /** L = max(0, cycle limit - Ct); 0 when not detected (FIELD.md, load score). */
  load: number;
  reason: string;
  sampleId: string;
  labId: string;
  labCall: string | null;
  callDiffers: boolean;
  /** Other results for this pen and assay in the round (a second rope), worst one shown above. */
  otherSampleIds: string[];
}

export interface PenRound {
  penId: string;
  rowLabel: string;
  position: number;
  sampleIds: string[];
  /** Some result came back for a rope in this pen. */
  returned: boolean;
  results: Record<string, PenAssayResult>;
}

export interface AssayTally {
  positive: number;
  suspect: number;
  negative: number;
  invalid: number;
  positivePens: string[];
  suspectPens: string[];
  invalidPens: string[];
  /** Pens with a valid result for this assay (positive, suspect or negative). */
  testedPens: string[];
}

export interface BarnRound {
  barnId: string;
  /** Pens in use: the survey population N. */
  pensInUse: number;
  ropesHung: number;
  ropesReturned: number;
  /** Ropes hung (or planned) with no result back. */
  missingSampleIds: string[];
  /** Of those, ropes planned for this round whose pen no other rope covered. */
  plannedMissing: string[];
  pens: PenRound[];
  byAssay: Record<string, AssayTally>;
}

export interface SiteRound {
  siteId: string;
  number: number;
  id: string;
  startOn: string;
  endOn: string;
  assays: string[];
  barns: BarnRound[];
}

export interface RopeInput extends DatedRope {
  source: string;
}

/** A planned rope with no result: missing in the round it was planned for, unless its pen was roped anyway. */
export interface PlannedInput {
  sampleId: string;
  barnId: string;
  penId: string;
  /** The plan was made after this round number; it is for the next one. */
  afterRound: number;
}

/** A pen's index in its barn's layout order (pens are listed row by row along the alley). */
function layoutOrder(barn: Barn, penId: string): number {
  const pen = barn.penById.get(penId.toUpperCase())!;
  return pen.row * barn.layout.pensPerRow + pen.position;
}

function emptyTally(): AssayTally {
  return { positive: 0, suspect: 0, negative: 0, invalid: 0, positivePens: [], suspectPens: [], invalidPens: [], testedPens: [] };
}

/**
 * Builds every round of a site.
 * @param ropes the site's ropes with locations (sheets, sample patterns, returned planned ropes)
 * @param results current (not superseded) results, any site; those whose sample is not a rope here are ignored
 */
export function buildSiteRounds(site: Site, ropes: readonly RopeInput[], results: readonly ResultInput[], plannedWithoutResults: readonly PlannedInput[] = []): SiteRound[] {
  const resultsBySample = new Map<string, ResultInput[]>();
  for (const result of results) {
    const list = resultsBySample.get(result.sampleId);
    if (list) list.push(result);
    else resultsBySample.set(result.sampleId, [result]);
  }
  const rounds = formRounds(site.id, ropes.filter((rope) => rope.siteId === site.id), site.program.roundWindowDays);
  return rounds.map((round) => {
    const assays = new Set<string>();
    const barns: BarnRound[] = site.barns.map((barn) => {
      const barnRopes = round.ropes.filter((rope) => rope.barnId === barn.id);
      const pens = new Map<string, PenRound>();
      const missing: string[] = [];
      let returned = 0;
      for (const rope of barnRopes) {
        const pen = barn.penById.get(rope.penId.toUpperCase());
        if (!pen) continue;
        let penRound = pens.get(pen.id);
        if (!penRound) {
          penRound = { penId: pen.id, rowLabel: pen.rowLabel, position: pen.position, sampleIds: [], returned: false, results: {} };
          pens.set(pen.id, penRound);
        }
        penRound.sampleIds.push(rope.sampleId);
        const ropeResults = resultsBySample.get(rope.sampleId) ?? [];
        if (ropeResults.length === 0) {
          missing.push(rope.sampleId);
          continue;
        }
        returned++;
        penRound.returned = true;
        for (const result of ropeResults) {
          assays.add(result.assayId);
          const candidate: PenAssayResult = {
            assayId: result.assayId,
            resultClass: result.resultClass,
            ct: result.ct,
            loadBand: result.loadBand,
            load: result.ct === null || result.resultClass === 'invalid' ? 0 : Math.max(0, result.cycleLimit - result.ct),
            reason: result.reason,
            sampleId: result.sampleId,
            labId: result.labId,
            labCall: result.labCall,
            callDiffers: result.callDiffers,
            otherSampleIds: [],
          };
          const existing = penRound.results[result.assayId];
          if (!existing) penRound.results[result.assayId] = candidate;
          else {
            // Worst class first; among equals the lower Ct (more nucleic acid) stands for the pen.
            const worse =
              CLASS_SEVERITY[candidate.resultClass] > CLASS_SEVERITY[existing.resultClass] ||
              (candidate.resultClass === existing.resultClass && (candidate.ct ?? Infinity) < (existing.ct ?? Infinity));
            const kept = worse ? candidate : existing;
            const other = worse ? existing : candidate;
            kept.otherSampleIds = [...existing.otherSampleIds, other.sampleId];
            penRound.results[result.assayId] = kept;
          }
        }
      }
      const plannedMissing = plannedWithoutResults
        .filter((rope) => rope.afterRound === round.number - 1 && rope.barnId === barn.id && !pens.get(rope.penId)?.returned)
        .map((rope) => rope.sampleId);
      missing.push(...plannedMissing);
      // Layout order (row, then position along the alley), as the barn's pens are listed.
      const penList = [...pens.values()].sort((a, b) => layoutOrder(barn, a.penId) - layoutOrder(barn, b.penId));
      const byAssay: Record<string, AssayTally> = {};
      for (const pen of penList) {
        for (const result of Object.values(pen.results)) {
          const tally = (byAssay[result.assayId] ??= emptyTally());
          tally[result.resultClass]++;
          if (result.resultClass === 'positive') tally.positivePens.push(pen.penId);
          if (result.resultClass === 'suspect') tally.suspectPens.push(pen.penId);
          if (result.resultClass === 'invalid') tally.invalidPens.push(pen.penId);
          else tally.testedPens.push(pen.penId);
        }
      }
      return {
        barnId: barn.id,
        pensInUse: barn.pens.filter((pen) => pen.status === 'in-use').length,
        ropesHung: barnRopes.length,
        ropesReturned: returned,
        missingSampleIds: missing.sort(),
        plannedMissing: plannedMissing.sort(),
        pens: penList,
        byAssay,
      };
    });
    const assayList = [...assays].sort();
    for (const barn of barns) for (const assay of assayList) barn.byAssay[assay] ??= emptyTally();
    return { siteId: site.id, number: round.number, id: round.id, startOn: round.startOn, endOn: round.endOn, assays: assayList, barns };
  });
}

export interface CtHistoryPoint {
  round: number;
  roundId: string;
  startOn: string;
  resultClass: ResultClass;
  ct: number | null;
}

/** Per pen and assay, the Ct across rounds (only rounds where the pen had a result). */
export function ctHistory(rounds: readonly SiteRound[], barnId: string, penId: string, assayId: string): CtHistoryPoint[] {
  const points: CtHistoryPoint[] = [];
  for (const round of rounds) {
    const pen = round.barns.find((barn) => barn.barnId === barnId)?.pens.find((candidate) => candidate.penId === penId);
    const result = pen?.results[assayId];
    if (result) points.push({ round: round.number, roundId: round.id, startOn: round.startOn, resultClass: result.resultClass, ct: result.ct });
  }
  return points;
}
