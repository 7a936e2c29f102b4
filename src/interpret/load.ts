/**
 * The load score of one rope result, the one number the spatial statistics read: for a Ct
 * assay L = max(0, cycle limit - Ct) (less Ct, more nucleic acid; 0 when not detected), for an
 * S/P assay max(0, S/P) (antibody level). An invalid result proves nothing and scores 0.
 * Load score: common practice, no source.
 */
import type { Measure } from '../config/types.js';

export interface LoadInput {
  measure: Measure;
  /** Ct when detected; null when not detected or not reported. */
  ct: number | null;
  sp: number | null;
  /** The run's cycle limit; null when the lab gave none. */
  cycleLimit: number | null;
  invalid: boolean;
}

/** @example loadScore({ measure: 'ct', ct: 28, sp: null, cycleLimit: 40, invalid: false }) // 12 */
export function loadScore(input: LoadInput): number {
  if (input.invalid) return 0;
  if (input.measure === 'sp-ratio') return Math.max(0, input.sp ?? 0);
  if (input.ct === null || input.cycleLimit === null) return 0;
  return Math.max(0, input.cycleLimit - input.ct);
}
