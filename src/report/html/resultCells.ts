/**
 * The cells of a result on the pages: its value (Ct, "n.d.", or S/P), the cutoffs it was read
 * with, and whether a round's results were read alike. Words only; no statistic.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';

/** One result of a pen, as the round summary holds it. */
export type PenResult = RoundSummary['pens'][number]['results'][string];

/**
 * The cutoffs a result was read with, in short: "positive below 36, suspect below 40, cycle
 * limit 40"; for an antibody result "positive at S/P ≥ 0.4, suspect from 0.3".
 */
export function cutoffText(
  result: Pick<PenResult, 'positiveBelow' | 'suspectBelow' | 'cycleLimit'> &
    Partial<Pick<PenResult, 'measure' | 'positiveAtOrAbove' | 'suspectAtOrAbove'>>,
): string {
  if (result.measure === 'sp-ratio') {
    return [
      result.positiveAtOrAbove === null || result.positiveAtOrAbove === undefined
        ? ''
        : `positive at S/P \u2265 ${result.positiveAtOrAbove}`,
      result.suspectAtOrAbove === null || result.suspectAtOrAbove === undefined
        ? ''
        : `suspect from ${result.suspectAtOrAbove}`,
    ]
      .filter((part) => part !== '')
      .join(', ');
  }
  const parts = [
    result.positiveBelow === null ? '' : `positive below ${result.positiveBelow}`,
    result.suspectBelow === null ? '' : `suspect below ${result.suspectBelow}`,
    result.cycleLimit === null ? '' : `cycle limit ${result.cycleLimit}`,
  ];
  return parts.filter((part) => part !== '').join(', ');
}

export const ctCell = (ct: number | null, resultClass: string) =>
  resultClass === 'invalid' ? 'invalid' : ct === null ? 'n.d.' : String(ct);

/** The value cell of a result: its Ct (n.d. when not detected), or "S/P 0.52" for an antibody result. */
export const valueCell = (result: { measure?: string; ct: number | null; sp?: number | null; resultClass: string }) =>
  result.measure === 'sp-ratio'
    ? result.resultClass === 'invalid' || result.sp === null || result.sp === undefined
      ? 'invalid'
      : `S/P ${result.sp}`
    : ctCell(result.ct, result.resultClass);

/** The round has an antibody assay: value columns hold a Ct or an S/P. */
export const hasAntibody = (summary: RoundSummary) => summary.assays.some((assay) => assay.measure === 'sp-ratio');

/**
 * The results of a round were not all read alike: more than one lab, or one lab with more than
 * one set of cutoffs for an assay. Then each finding names its lab and cutoffs; otherwise the
 * one set is named once, under "Where the results came from".
 */
export function mixedReadings(summary: RoundSummary): boolean {
  const labs = new Set(summary.cutoffs.map((cutoff) => cutoff.labId));
  const assays = new Set(summary.cutoffs.map((cutoff) => cutoff.assayId));
  return labs.size > 1 || summary.cutoffs.length > assays.size;
}
