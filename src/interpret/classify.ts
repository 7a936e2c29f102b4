/**
 * Ct or S/P to a call per assay: positive / suspect / negative / invalid, with the reason, and a
 * semi-quantitative load band. The cutoffs are the lab's validated ones for that assay (the lab
 * profile), falling back to the shipped defaults, which are common practice and not a standard.
 * A Ct is positive below its cutoff (less Ct, more nucleic acid); an S/P ratio at or above its
 * cutoff (more S/P, more antibody): the direction flips with the measure.
 */
import type { Assay, LabAssay, LoadBand, SpLoadBand } from '../config/types.js';
import type { CtReading } from './ct.js';
import { loadScore } from './load.js';
import type { SpReading } from './sp.js';

/** A result cell as read: a Ct reading (readCt) or an S/P reading (readSp). */
export type ValueReading = CtReading | SpReading;

export type ResultClass = 'positive' | 'suspect' | 'negative' | 'invalid';

export interface Interpretation {
  resultClass: ResultClass;
  reason: string;
  /** Band name for detected samples ("high", "moderate", "low"); undefined when not detected. */
  loadBand: string | undefined;
  /** Load score L = max(0, cycle limit - Ct); for an S/P, max(0, S/P); 0 when not detected or invalid. */
  load: number;
}

/** The worst-first order used when a pen has several results for one assay in a round. */
export const CLASS_SEVERITY: Readonly<Record<ResultClass, number>> = {
  positive: 3,
  suspect: 2,
  invalid: 1,
  negative: 0,
};

/** Band of a detected Ct: the first band whose `below` exceeds it, else "low". Lower Ct, more nucleic acid. */
export function loadBandOf(ct: number, bands: readonly LoadBand[]): string {
  for (const band of bands) if (ct < band.below) return band.name;
  return 'low';
}

/** Band of an S/P: the first band (highest first) at or under it; undefined below every band or without bands. */
export function spBandOf(sp: number, bands: readonly SpLoadBand[]): string | undefined {
  for (const band of bands) if (sp >= band.atOrAbove) return band.name;
  return undefined;
}

/**
 * Classifies one result.
 * @param reading the result cell as read by `readCt` (Ct assay) or `readSp` (S/P assay)
 * @param controlFailed the internal or extraction control failed: invalid (retest), never negative
 * @throws RangeError when the reading and the lab assay are of different measures
 */
export function classify(
  reading: ValueReading,
  cutoffs: LabAssay,
  assay: Assay,
  controlFailed: string | undefined,
): Interpretation {
  if (controlFailed !== undefined) {
    return {
      resultClass: 'invalid',
      reason: `internal control failed (${controlFailed}): retest, not a negative`,
      loadBand: undefined,
      load: 0,
    };
  }
  switch (reading.kind) {
    case 'missing':
      return cutoffs.measure === 'sp-ratio'
        ? {
            resultClass: 'invalid',
            reason:
              'no S/P value: an antibody result has no "not detected", so a blank is no reading (retest or ask the lab)',
            loadBand: undefined,
            load: 0,
          }
        : {
            resultClass: 'invalid',
            reason: 'no Ct and this lab does not use blank for not detected: retest',
            loadBand: undefined,
            load: 0,
          };
    case 'error':
      return { resultClass: 'invalid', reason: reading.detail, loadBand: undefined, load: 0 };
    case 'not-detected':
      return { resultClass: 'negative', reason: reading.reason, loadBand: undefined, load: 0 };
    case 'sp':
      return classifySp(reading.sp, cutoffs, assay);
    case 'detected':
      return classifyCt(reading.ct, cutoffs, assay);
  }
}

/** An S/P reading: positive at or above the positive cutoff, suspect in the band under it. */
function classifySp(sp: number, cutoffs: LabAssay, assay: Assay): Interpretation {
  if (cutoffs.measure !== 'sp-ratio' || assay.measure !== 'sp-ratio')
    throw new RangeError(`an S/P reading needs an S/P assay; ${cutoffs.assayId} has measure ${cutoffs.measure}`);
  const load = loadScore({ measure: 'sp-ratio', ct: null, sp, cycleLimit: null, invalid: false });
  const band = spBandOf(sp, assay.loadBands);
  if (sp >= cutoffs.positiveAtOrAbove) {
    return {
      resultClass: 'positive',
      reason: `S/P ${sp} at or above the positive cutoff ${cutoffs.positiveAtOrAbove}: antibody found (exposure, not necessarily current infection)`,
      loadBand: band,
      load,
    };
  }
  if (cutoffs.suspectAtOrAbove !== undefined && sp >= cutoffs.suspectAtOrAbove) {
    return {
      resultClass: 'suspect',
      reason: `S/P ${sp} in the suspect band [${cutoffs.suspectAtOrAbove}, ${cutoffs.positiveAtOrAbove}): retest advised`,
      loadBand: band,
      load,
    };
  }
  return {
    resultClass: 'negative',
    reason: `S/P ${sp} below the ${cutoffs.suspectAtOrAbove !== undefined ? 'suspect' : 'positive'} cutoff ${cutoffs.suspectAtOrAbove ?? cutoffs.positiveAtOrAbove}: no antibody found`,
    loadBand: band,
    load,
  };
}

/** A detected Ct: positive below the positive cutoff, suspect below the suspect cutoff, else a late signal read as negative. */
function classifyCt(ct: number, cutoffs: LabAssay, assay: Assay): Interpretation {
  if (cutoffs.measure !== 'ct' || assay.measure !== 'ct')
    throw new RangeError(`a Ct reading needs a Ct assay; ${cutoffs.assayId} has measure ${cutoffs.measure}`);
  const load = loadScore({ measure: 'ct', ct, sp: null, cycleLimit: cutoffs.cycleLimit, invalid: false });
  const band = loadBandOf(ct, assay.loadBands);
  if (ct < cutoffs.positiveBelow) {
    return {
      resultClass: 'positive',
      reason: `Ct ${ct} below the positive cutoff ${cutoffs.positiveBelow}`,
      loadBand: band,
      load,
    };
  }
  if (ct < cutoffs.suspectBelow) {
    return {
      resultClass: 'suspect',
      reason: `Ct ${ct} in the suspect band [${cutoffs.positiveBelow}, ${cutoffs.suspectBelow}): retest advised`,
      loadBand: band,
      load,
    };
  }
  return {
    resultClass: 'negative',
    reason: `late signal Ct ${ct} at or above ${cutoffs.suspectBelow}: read as negative`,
    loadBand: band,
    load,
  };
}
