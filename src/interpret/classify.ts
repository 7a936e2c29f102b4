/**
 * Ct to a call per assay: positive / suspect / negative / invalid, with the reason, and a
 * semi-quantitative load band. The cutoffs are the lab's validated ones for that assay (the lab
 * profile), falling back to the shipped defaults, which are common practice and not a standard.
 */
import type { Assay, LabAssay, LoadBand } from '../config/types.js';
import type { CtReading } from './ct.js';

export type ResultClass = 'positive' | 'suspect' | 'negative' | 'invalid';

export interface Interpretation {
  resultClass: ResultClass;
  reason: string;
  /** Band name for detected samples ("high", "moderate", "low"); undefined when not detected. */
  loadBand: string | undefined;
  /** Load score L = max(0, cycle limit - Ct); 0 when not detected or invalid. */
  load: number;
}

/** The worst-first order used when a pen has several results for one assay in a round. */
export const CLASS_SEVERITY: Readonly<Record<ResultClass, number>> = { positive: 3, suspect: 2, invalid: 1, negative: 0 };

/** Band of a detected Ct: the first band whose `below` exceeds it, else "low". Lower Ct, more nucleic acid. */
export function loadBandOf(ct: number, bands: readonly LoadBand[]): string {
  for (const band of bands) if (ct < band.below) return band.name;
  return 'low';
}

/**
 * Classifies one result.
 * @param reading the Ct cell as read by `readCt`
 * @param controlFailed the internal or extraction control failed: invalid (retest), never negative
 */
export function classify(reading: CtReading, cutoffs: LabAssay, assay: Assay, controlFailed: string | undefined): Interpretation {
  if (controlFailed !== undefined) {
    return { resultClass: 'invalid', reason: `internal control failed (${controlFailed}): retest, not a negative`, loadBand: undefined, load: 0 };
  }
  switch (reading.kind) {
    case 'missing':
      return { resultClass: 'invalid', reason: 'no Ct and this lab does not use blank for not detected: retest', loadBand: undefined, load: 0 };
    case 'error':
      return { resultClass: 'invalid', reason: reading.detail, loadBand: undefined, load: 0 };
    case 'not-detected':
      return { resultClass: 'negative', reason: reading.reason, loadBand: undefined, load: 0 };
    case 'detected': {
      const { ct } = reading;
      const load = Math.max(0, cutoffs.cycleLimit - ct);
      const band = loadBandOf(ct, assay.loadBands);
      if (ct < cutoffs.positiveBelow) {
        return { resultClass: 'positive', reason: `Ct ${ct} below the positive cutoff ${cutoffs.positiveBelow}`, loadBand: band, load };
      }
      if (ct < cutoffs.suspectBelow) {
        return {
          resultClass: 'suspect',
          reason: `Ct ${ct} in the suspect band [${cutoffs.positiveBelow}, ${cutoffs.suspectBelow}): retest advised`,
          loadBand: band,
          load,
        };
      }
      return { resultClass: 'negative', reason: `late signal Ct ${ct} at or above ${cutoffs.suspectBelow}: read as negative`, loadBand: band, load };
    }
  }
}
