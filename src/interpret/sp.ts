/**
 * Reading an S/P cell of an antibody ELISA. The sample-to-positive ratio is
 * (OD sample - OD negative control) / (OD positive control - OD negative control): a number,
 * higher with more antibody, slightly below 0 when the sample reads under the negative control.
 * There is no "not detected" for an S/P: a blank cell or a word is no reading, so the row is
 * held as invalid (blank) or refused (a word), never read as negative.
 */
import type { LabProfile } from '../config/types.js';

/**
 * The S/P values ropewatch reads: from -1 (a sample far under the negative control would mean a
 * failed plate) up to 10 (oral-fluid S/P ratios stay well below that; a larger number is more
 * likely a percentage, an optical density or a titre in the wrong column). Common practice, no
 * source.
 */
export const SP_RANGE = Object.freeze({ min: -1, max: 10 });

export type SpReading =
  | { kind: 'sp'; sp: number }
  | { kind: 'missing' }
  | { kind: 'error'; code: 'bad-sp' | 'sp-out-of-range'; detail: string };

const NUMBER_WITH_DOT = /^[+-]?(\d+(\.\d*)?|\.\d+)$/;
const NUMBER_WITH_COMMA = /^[+-]?(\d+(,\d*)?|,\d+)$/;

/** Parses a signed decimal written with the lab's decimal mark; no exponents, no thousands separators. */
function parseSigned(text: string, decimal: '.' | ','): number | undefined {
  if (!(decimal === ',' ? NUMBER_WITH_COMMA : NUMBER_WITH_DOT).test(text)) return undefined;
  const value = Number(decimal === ',' ? text.replace(',', '.') : text);
  // -0 reads as 0: one value, one text in every output.
  return Number.isFinite(value) ? value + 0 : undefined;
}

/**
 * Reads one S/P cell.
 * - blank: missing (the row is held as invalid: no reading, retest or ask the lab);
 * - a number in [-1, 10] with the lab's decimal mark: the S/P ratio;
 * - anything else (a word, a percentage, an exponent, a number outside the range) is refused.
 */
export function readSp(raw: string, lab: Pick<LabProfile, 'id' | 'decimal'>): SpReading {
  const text = raw.trim();
  if (text === '') return { kind: 'missing' };
  const value = parseSigned(text, lab.decimal);
  if (value === undefined) {
    const other = parseSigned(text, lab.decimal === '.' ? ',' : '.');
    const hint =
      other !== undefined
        ? ` (it would read as ${other} with a "${lab.decimal === '.' ? ',' : '.'}" decimal mark; check the lab profile's format.decimal)`
        : '';
    return {
      kind: 'error',
      code: 'bad-sp',
      detail: `"${text}" is not an S/P ratio of lab ${lab.id}: an antibody ELISA result is a number, with no not-detected word${hint}`,
    };
  }
  if (value < SP_RANGE.min || value > SP_RANGE.max) {
    return {
      kind: 'error',
      code: 'sp-out-of-range',
      detail: `S/P ${text} is outside [${SP_RANGE.min}, ${SP_RANGE.max}], beyond any oral-fluid ELISA reading (a percentage, an optical density or a titre in the result column?)`,
    };
  }
  return { kind: 'sp', sp: value };
}
