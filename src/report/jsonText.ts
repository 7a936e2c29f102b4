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

const COMMA = 0x2c;
const LINE_FEED = 0x0a;
const LOWER_E = 0x65;
const PLUS = 0x2b;
const MINUS = 0x2d;

function isDigit(code: number): boolean {
  return code >= 0x30 && code <= 0x39;
}

/**
 * Indented JSON with each number token of more than CARRIED_DIGITS significant digits rewritten
 * at its carried precision. Such a token is a non-integer (written with a point: ECMA-262,
 * Number::toString) whose digits around the point number 13 or more; the scan goes from point
 * to point (a native search), so the text between costs little. A point inside a string is
 * passed over: a token is taken only when a line ends after it (and its comma), and JSON writes a
 * line feed inside a string as `\n`, so a raw line feed comes after the string's closing quote.
 * A number of 12 or fewer significant digits is its own carried value (a double's 17 digits are
 * far finer than 12), and rounding to significant digits is the same for either sign, so the
 * sign stays as written.
 */
function carryLongNumbers(text: string): string {
  let carriedText = '';
  let copiedTo = 0;
  for (let dot = text.indexOf('.'); dot >= 0; dot = text.indexOf('.', dot + 1)) {
    let start = dot;
    while (start > 0 && isDigit(text.charCodeAt(start - 1))) start--;
    let end = dot + 1;
    while (isDigit(text.charCodeAt(end))) end++;
    if (end - start <= CARRIED_DIGITS + 1 || start === dot || end === dot + 1) continue;
    if (text.charCodeAt(end) === LOWER_E) {
      end++;
      const sign = text.charCodeAt(end);
      if (sign === PLUS || sign === MINUS) end++;
      while (isDigit(text.charCodeAt(end))) end++;
    }
    const next = text.charCodeAt(end);
    if (next !== LINE_FEED && (next !== COMMA || text.charCodeAt(end + 1) !== LINE_FEED)) continue;
    carriedText += text.slice(copiedTo, start) + numberText(Number(text.slice(start, end)));
    copiedTo = end;
    dot = end - 1;
  }
  return copiedTo === 0 ? text : carriedText + text.slice(copiedTo);
}

/**
 * A value as pretty JSON (two spaces, a trailing newline) with every number at its carried
 * precision: JSON.stringify without a replacer, then the long number tokens rewritten
 * (carryLongNumbers). The same text as a replacer that carries each number (the shortest decimal
 * of a double reads back as that double: ECMA-262, Number::toString), without a call per value;
 * a Number object, which the replacer would leave as it is, is not a value the outputs hold.
 */
export function jsonText(value: unknown): string {
  return carryLongNumbers(`${JSON.stringify(value, null, 2)}\n`);
}

/** A value as one line of JSON (JSON Lines) with every number at its carried precision. */
export function jsonLine(value: unknown): string {
  return JSON.stringify(value, carriedNumbers);
}
