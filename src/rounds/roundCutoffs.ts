/** The distinct cutoffs (lab, assay) a round's results were read with, as stored with each result. Pure. */
import type { ResultInput, RoundCutoff } from './roundTypes.js';
import { compareText } from './penOrder.js';

const known = (value: number | null | undefined): value is number => value !== null && value !== undefined;

/** The cutoffs a result was read with, when stored with it (older callers give none). */
function roundCutoffOf(result: ResultInput): Omit<RoundCutoff, 'results'> | undefined {
  const measure = result.measure ?? 'ct';
  if (measure === 'sp-ratio') {
    if (!known(result.positiveAtOrAbove)) return undefined;
    return {
      labId: result.labId,
      assayId: result.assayId,
      measure,
      positiveBelow: null,
      suspectBelow: null,
      cycleLimit: null,
      positiveAtOrAbove: result.positiveAtOrAbove,
      suspectAtOrAbove: result.suspectAtOrAbove ?? null,
    };
  }
  if (!known(result.positiveBelow) || !known(result.suspectBelow)) return undefined;
  return {
    labId: result.labId,
    assayId: result.assayId,
    measure,
    positiveBelow: result.positiveBelow,
    suspectBelow: result.suspectBelow,
    cycleLimit: result.cycleLimit,
    positiveAtOrAbove: null,
    suspectAtOrAbove: null,
  };
}

/** A missing cutoff reads as none. */
const same = (a: number | null | undefined, b: number | null | undefined) => (a ?? null) === (b ?? null);

/** Whether `counted` was read with the same lab, assay, measure and every cutoff (written out: this runs per result). */
function sameCutoff(counted: RoundCutoff, readWith: Omit<RoundCutoff, 'results'>): boolean {
  return (
    counted.labId === readWith.labId &&
    counted.assayId === readWith.assayId &&
    counted.measure === readWith.measure &&
    same(counted.positiveBelow, readWith.positiveBelow) &&
    same(counted.suspectBelow, readWith.suspectBelow) &&
    same(counted.cycleLimit, readWith.cycleLimit) &&
    same(counted.positiveAtOrAbove, readWith.positiveAtOrAbove) &&
    same(counted.suspectAtOrAbove, readWith.suspectAtOrAbove)
  );
}

/**
 * Counts one result under the cutoffs it was read with (the same lab, assay, measure and every
 * cutoff), in the order first seen. A round's results share a few cutoffs: they are compared
 * field by field, never made into a key per result.
 */
export function countCutoff(cutoffs: RoundCutoff[], result: ResultInput): void {
  const readWith = roundCutoffOf(result);
  if (readWith === undefined) return;
  const cutoff = cutoffs.find((candidate) => sameCutoff(candidate, readWith));
  if (cutoff) cutoff.results++;
  else cutoffs.push({ ...readWith, results: 1 });
}

/** The counted cutoffs by lab, assay, then the cutoffs themselves. */
export function sortedCutoffs(cutoffs: readonly RoundCutoff[]): RoundCutoff[] {
  return [...cutoffs].sort(
    (a, b) =>
      compareText(a.labId, b.labId) ||
      compareText(a.assayId, b.assayId) ||
      (a.positiveBelow ?? 0) - (b.positiveBelow ?? 0) ||
      (a.cycleLimit ?? 0) - (b.cycleLimit ?? 0) ||
      (a.positiveAtOrAbove ?? 0) - (b.positiveAtOrAbove ?? 0) ||
      (a.suspectAtOrAbove ?? 0) - (b.suspectAtOrAbove ?? 0),
  );
}
