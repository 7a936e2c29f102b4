/**
 * Reading a Ct cell as one lab writes it. A lab profile says how that lab writes "not detected":
 * an empty cell, a word, the cycle limit, or a numeric code such as 0. A Ct of 0 is never read as
 * a strong positive: either the profile declares it a not-detected code or the row is refused.
 */
import { foldToken } from '../util/fold.js';
import type { CtLabAssay, LabAssay, LabProfile } from '../config/types.js';

/** Cycles a PCR run can have: no real run goes beyond 60 (common practice, no source). */
export const MAX_PLAUSIBLE_CYCLES = 60;

export type CtReading =
  | { kind: 'detected'; ct: number }
  | { kind: 'not-detected'; reason: string }
  | { kind: 'missing' }
  | { kind: 'error'; code: 'bad-ct' | 'ct-out-of-range'; detail: string };

const NUMBER_WITH_DOT = /^[+]?(\d+(\.\d*)?|\.\d+)$/;
const NUMBER_WITH_COMMA = /^[+]?(\d+(,\d*)?|,\d+)$/;
const ABOVE_LIMIT = /^>\s*(\d+(?:[.,]\d+)?)$/;

/** Parses a decimal number written with the lab's decimal mark; no exponents, no thousands separators. */
export function parseDecimal(text: string, decimal: '.' | ','): number | undefined {
  const trimmed = text.trim();
  const pattern = decimal === ',' ? NUMBER_WITH_COMMA : NUMBER_WITH_DOT;
  if (!pattern.test(trimmed)) return undefined;
  const value = Number(decimal === ',' ? trimmed.replace(',', '.') : trimmed);
  return Number.isFinite(value) ? value : undefined;
}

/**
 * Reads one Ct cell.
 * - blank: not detected when the profile says so, else missing (the row becomes invalid);
 * - a configured token ("Undetermined", "ND", ...): not detected;
 * - "> N" with N at or above the cycle limit: not detected within the run;
 * - a configured numeric code (e.g. 0): not detected;
 * - the cycle limit itself (or above) when the profile says so: not detected;
 * - a number in (0, 60]: detected; anything else is refused with a reason.
 */
export function readCt(raw: string, lab: LabProfile, anyLabAssay: LabAssay): CtReading {
  if (anyLabAssay.measure !== 'ct')
    throw new RangeError(
      `readCt reads Ct assays; ${anyLabAssay.labAssayName} has measure ${anyLabAssay.measure} (readSp)`,
    );
  const labAssay: CtLabAssay = anyLabAssay;
  const text = raw.trim();
  if (text === '')
    return lab.blankIsNotDetected
      ? { kind: 'not-detected', reason: 'empty Ct cell (this lab leaves not detected blank)' }
      : { kind: 'missing' };
  const token = foldToken(text);
  if (lab.notDetectedTokens.has(token))
    return { kind: 'not-detected', reason: `"${text}" is this lab's word for not detected` };
  const above = ABOVE_LIMIT.exec(text);
  if (above) {
    const limit = Number(above[1]!.replace(',', '.'));
    if (limit >= labAssay.cycleLimit)
      return { kind: 'not-detected', reason: `"${text}": no signal within the ${labAssay.cycleLimit}-cycle run` };
    return {
      kind: 'error',
      code: 'bad-ct',
      detail: `"${text}" is ambiguous: it is below the ${labAssay.cycleLimit}-cycle limit, so it is neither a Ct nor not detected`,
    };
  }
  const value = parseDecimal(text, lab.decimal);
  if (value === undefined) {
    const other = parseDecimal(text, lab.decimal === '.' ? ',' : '.');
    const hint =
      other !== undefined
        ? ` (it would read as ${other} with a "${lab.decimal === '.' ? ',' : '.'}" decimal mark; check the lab profile's format.decimal)`
        : '';
    return {
      kind: 'error',
      code: 'bad-ct',
      detail: `"${text}" is not a Ct value or a not-detected token of lab ${lab.id}${hint}`,
    };
  }
  if (lab.notDetectedCodes.includes(value))
    return { kind: 'not-detected', reason: `${text} is this lab's numeric code for not detected` };
  if (value === 0) {
    return {
      kind: 'error',
      code: 'ct-out-of-range',
      detail:
        'a Ct of 0 is not a result; if this lab writes 0 for not detected, add 0 to notDetected.numericCodes in its profile',
    };
  }
  if (value > MAX_PLAUSIBLE_CYCLES)
    return {
      kind: 'error',
      code: 'ct-out-of-range',
      detail: `Ct ${text} is beyond any PCR run (more than ${MAX_PLAUSIBLE_CYCLES} cycles)`,
    };
  if (value >= labAssay.cycleLimit) {
    if (lab.cycleLimitIsNotDetected)
      return { kind: 'not-detected', reason: `Ct ${text} is at the ${labAssay.cycleLimit}-cycle limit: no signal` };
    return {
      kind: 'error',
      code: 'ct-out-of-range',
      detail: `Ct ${text} is beyond the ${labAssay.cycleLimit}-cycle limit of this assay`,
    };
  }
  return { kind: 'detected', ct: value };
}
