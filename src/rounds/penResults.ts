/**
 * One pen's result per assay: each result (a rope's own, or its pool's) as the pen reads it, and
 * the worst of a pen's results standing for the pen. Pure.
 */
import type { Measure } from '../config/types.js';
import { CLASS_SEVERITY } from '../interpret/classify.js';
import { loadScore } from '../interpret/load.js';
import type { PenAssayResult, PenRound, ResultInput, RopeInput } from './roundTypes.js';

/** Pools of a round: which pens (barn/pen) each pool ID covers (a pool's result applies to every rope in it). */
export function poolPensOf(ropes: readonly RopeInput[]): Map<string, string[]> {
  const poolPens = new Map<string, string[]>();
  for (const rope of ropes) {
    if (rope.poolId === undefined || rope.poolId === null) continue;
    const pens = poolPens.get(rope.poolId);
    const pen = `${rope.barnId}/${rope.penId}`;
    if (pens === undefined) poolPens.set(rope.poolId, [pen]);
    else if (!pens.includes(pen)) pens.push(pen);
  }
  return poolPens;
}

/**
 * A result as it reads for the pen. A pool's result (`poolId` set) names its pool; a positive
 * pool says one or more of its pens is infected, not which: each of its pens is held for a
 * retest on its own (suspect), never counted as a positive pen.
 */
export function penAssayResult(
  result: ResultInput,
  measure: Measure,
  poolId: string | null,
  poolPens: ReadonlyMap<string, string[]>,
): PenAssayResult {
  const sp = result.sp ?? null;
  const candidate: PenAssayResult = {
    assayId: result.assayId,
    measure,
    resultClass: result.resultClass,
    ct: result.ct,
    sp,
    loadBand: result.loadBand,
    load: loadScore({
      measure,
      ct: result.ct,
      sp,
      cycleLimit: result.cycleLimit,
      invalid: result.resultClass === 'invalid',
    }),
    reason: result.reason,
    sampleId: result.sampleId,
    labId: result.labId,
    labCall: result.labCall,
    callDiffers: result.callDiffers,
    ctRaw: result.ctRaw ?? null,
    positiveBelow: result.positiveBelow ?? null,
    suspectBelow: result.suspectBelow ?? null,
    cycleLimit: result.cycleLimit,
    positiveAtOrAbove: result.positiveAtOrAbove ?? null,
    suspectAtOrAbove: result.suspectAtOrAbove ?? null,
    accession: result.accession ?? null,
    collectedOn: result.collectedOn ?? null,
    reportedOn: result.reportedOn ?? null,
    otherSampleIds: [],
  };
  if (poolId !== null) {
    candidate.pool = { poolId, poolClass: result.resultClass, pens: poolPens.get(poolId) ?? [] };
    if (result.resultClass === 'positive') {
      candidate.resultClass = 'suspect';
      candidate.reason = `positive pool ${poolId} (${result.reason}): at least one of its ${candidate.pool.pens.length} pens is infected, not necessarily this one; retest the pen on its own`;
    }
  }
  return candidate;
}

/**
 * Of two results of one class, the one that stands for the pen: the lower Ct (more nucleic
 * acid), or the higher S/P (more antibody).
 */
function strongerWithinClass(candidate: PenAssayResult, existing: PenAssayResult): boolean {
  if (candidate.measure === 'sp-ratio') return (candidate.sp ?? -Infinity) > (existing.sp ?? -Infinity);
  return (candidate.ct ?? Infinity) < (existing.ct ?? Infinity);
}

/** Keeps the worse of the pen's result for the assay and `candidate`; the other is listed under it. */
export function keepWorst(penRound: PenRound, candidate: PenAssayResult): void {
  const existing = penRound.results[candidate.assayId];
  if (!existing) {
    penRound.results[candidate.assayId] = candidate;
    return;
  }
  // Worst class first; among equals the lower Ct (more nucleic acid), or the higher S/P
  // (more antibody), stands for the pen.
  const worse =
    CLASS_SEVERITY[candidate.resultClass] > CLASS_SEVERITY[existing.resultClass] ||
    (candidate.resultClass === existing.resultClass && strongerWithinClass(candidate, existing));
  const kept = worse ? candidate : existing;
  const other = worse ? existing : candidate;
  kept.otherSampleIds = [...existing.otherSampleIds, other.sampleId];
  penRound.results[candidate.assayId] = kept;
}
