/**
 * Code 128 symbol encoding of printable ASCII text: the code set choice, the check character and
 * the element widths of each symbol character.
 *
 * Code sets: B for any printable character (value = character code - 32), C for pairs of digits
 * (value = the pair as a number). The text starts in C when it opens with four or more digits
 * (or is exactly two digits), otherwise in B. In B, a run of four or more digits switches to C
 * (Code C, 99): at once for an even run, after its first digit for an odd run. In C, fewer than
 * two digits left in the run switch back to B (Code B, 100). These are the rules of the
 * minimum-length guidance of ISO/IEC 15417 Annex E as restricted to printable ASCII, where code
 * set A is never needed, and the choices Barcode Writer in Pure PostScript (bwip-js) makes for
 * such text, so labels keep the bars they had (the test compares the two on sample IDs and on
 * random text).
 *
 * Check character: (start value + sum over data positions p >= 1 of p x value) mod 103.
 * @see ISO/IEC 15417:2007, Information technology - Automatic identification and data capture
 *   techniques - Code 128 bar code symbology specification (sections 4.1 to 4.3, Table 1, Annex E).
 */

/**
 * Element widths of the symbol characters, values 0 to 106 (103-105 start A/B/C, 106 stop), bar
 * first, in modules (ISO/IEC 15417:2007 Table 1).
 */
const PATTERNS = (
  '212222 222122 222221 121223 121322 131222 122213 122312 132212 221213 221312 231212 112232 122132 122231 113222 ' +
  '123122 123221 223211 221132 221231 213212 223112 312131 311222 321122 321221 312212 322112 322211 212123 212321 ' +
  '232121 111323 131123 131321 112313 132113 132311 211313 231113 231311 112133 112331 132131 113123 113321 133121 ' +
  '313121 211331 231131 213113 213311 213131 311123 311321 331121 312113 312311 332111 314111 221411 431111 111224 ' +
  '111422 121124 121421 141122 141221 112214 112412 122114 122411 142112 142211 241211 221114 413111 241112 134111 ' +
  '111242 121142 121241 114212 124112 124211 411212 421112 421211 212141 214121 412121 111143 111341 131141 114113 ' +
  '114311 411113 411311 113141 114131 311141 411131 211412 211214 211232 2331112'
)
  .split(' ')
  .map((pattern) => Object.freeze([...pattern].map(Number)));

const CODE_C = 99;
const CODE_B = 100;
const START_B = 104;
const START_C = 105;
const STOP = 106;

const isDigit = (code: number) => code >= 48 && code <= 57;

/**
 * The symbol character values of `text`: start, data (with code set switches) and check; the
 * stop character is not included.
 * @param text printable ASCII (codes 32 to 126), at least one character
 * @throws RangeError for an empty text or a character outside printable ASCII
 */
export function code128Values(text: string): number[] {
  if (!/^[\x20-\x7e]+$/.test(text))
    throw new RangeError(`\`text\` must be printable ASCII, got ${JSON.stringify(text)}`);
  const n = text.length;
  // run[i]: how many digits in a row start at position i.
  const run = new Int32Array(n + 1);
  for (let i = n - 1; i >= 0; i--) run[i] = isDigit(text.charCodeAt(i)) ? run[i + 1]! + 1 : 0;
  let setC = (n === 2 && run[0] === 2) || run[0]! >= 4;
  const values = [setC ? START_C : START_B];
  let i = 0;
  while (i < n) {
    const digits = run[i]!;
    if (!setC && digits >= 4) {
      if (digits % 2 === 1) values.push(text.charCodeAt(i++) - 32);
      values.push(CODE_C);
      setC = true;
    } else if (setC && digits < 2) {
      values.push(CODE_B);
      setC = false;
    } else if (setC) {
      values.push((text.charCodeAt(i) - 48) * 10 + (text.charCodeAt(i + 1) - 48));
      i += 2;
    } else {
      values.push(text.charCodeAt(i++) - 32);
    }
  }
  let sum = values[0]!;
  for (let p = 1; p < values.length; p++) sum += p * values[p]!;
  values.push(sum % 103);
  return values;
}

/**
 * The element widths of the Code 128 symbol of `text` in modules, bar first: start, data, check
 * and stop characters, quiet zones not included.
 * @throws RangeError as {@link code128Values}
 */
export function code128Elements(text: string): number[] {
  const widths: number[] = [];
  for (const value of [...code128Values(text), STOP]) widths.push(...PATTERNS[value]!);
  return widths;
}
