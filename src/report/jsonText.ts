/**
 * Numbers as text in the JSON outputs and the tidy tables: the shortest decimal that reads back
 * as the number rounded to the precision it carries, so that float noise such as
 * `12.899999999999999` (12.9 after arithmetic on decimal inputs) is written `12.9`, and a CSV
 * cell and its JSON twin show the same text.
 *
 * The choice: integers as they are; any other number rounded to 12 significant digits, then
 * written by ECMAScript's Number::toString, which gives the shortest decimal that reads back as
 * that double (ECMA-262, Number::toString; Steele & White 1990, "How to print floating-point
 * numbers accurately"). A binary64 double carries 15 decimal digits faithfully (IEEE 754-2019;
 * C's DBL_DIG); arithmetic on decimal inputs (a Ct of 27.1, a sensitivity of 0.9) leaves rounding
 * error in the last two or three of them (a product of a hundred factors, up to a few hundred
 * units in the last place). Twelve digits drop that error and still keep far more than any input
 * carries (lab values to 0.01, sensitivities to 0.01) or any statistic means (a Monte Carlo
 * figure with 10,000 outbreaks is good to about 0.005).
 */

/** Significant digits a non-integer number is written with. */
export const CARRIED_DIGITS = 12;

/** The number as written: rounded to CARRIED_DIGITS significant digits (integers unchanged). */
export function carried(value: number): number {
  if (!Number.isFinite(value)) throw new RangeError(`\`value\` must be a finite number, got ${value}`);
  if (Number.isInteger(value)) return value;
  return Number(value.toPrecision(CARRIED_DIGITS));
}

/** The text of a number in a CSV cell or a JSON value (the same for both). */
export function numberText(value: number): string {
  return String(carried(value));
}

/** A JSON number replacer: every number at its carried precision (NaN and infinities stay as JSON writes them, null). */
function carriedNumbers(_key: string, value: unknown): unknown {
  return typeof value === 'number' && Number.isFinite(value) ? carried(value) : value;
}

/** A value as pretty JSON (two spaces, a trailing newline) with every number at its carried precision. */
export function jsonText(value: unknown): string {
  return `${JSON.stringify(value, carriedNumbers, 2)}\n`;
}

/** A value as one line of JSON (JSON Lines) with every number at its carried precision. */
export function jsonLine(value: unknown): string {
  return JSON.stringify(value, carriedNumbers);
}
