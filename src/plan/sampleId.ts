/**
 * Sample IDs written on the tube: short, unique within a site and round, with a check
 * character so that a mistyped ID is caught on ingest instead of landing in the wrong pen.
 *
 * Grammar (after upper-casing and removing all white space):
 *
 *     ID       = SITE ROUND "-" SEQUENCE CHECK
 *     SITE     = [A-Z0-9]{1,4} [A-Z]      2 to 5 characters from config, ending in a letter
 *     ROUND    = [0-9]{2,4}               round number, zero-padded to 2 digits, no extra zeros
 *     SEQUENCE = [0-9]{3}                 001 to 999 within the round
 *     CHECK    = [0-9A-Z*]                ISO/IEC 7064 MOD 37-2 over SITE ROUND SEQUENCE
 *
 * e.g. `KES07-014G`. SITE ends in a letter so that the split between site and round is unique.
 * The hyphen is required: were it optional, a digit typed for the hyphen (`KES078014G`) would
 * read as round 078... an insertion into the checked string, which no check character catches
 * for certain. White space is ignored, so a space cannot stand in for the hyphen. The generated parts
 * (round, sequence) are digits only, so I, O and L never appear there; the check character can
 * be any of 37 symbols, and the planner skips sequence numbers whose check character would be
 * I, O or L (see {@link isWriteFriendlyCheck}), so that no printed ID carries one.
 *
 * Why MOD 37-2 and not the hybrid MOD 37,36: a pure system with a prime modulus (37) and radix 2
 * changes the weighted sum by (a - b) 2^k (single substitution) or (a - b) 2^k (2 - 1)
 * (adjacent transposition), neither of which is 0 mod 37 when a != b and |a - b| < 37, so it
 * detects every single substitution and every adjacent transposition. The hybrid MOD 37,36 misses
 * a few adjacent transpositions (an exhaustive search over random IDs finds them, e.g.
 * `JI0R4RUE` and `IJ0R4RUE` share a check character), so it cannot promise that a swap is caught.
 * @see ISO/IEC 7064:2003, Information technology - Security techniques - Check character systems.
 */
import { requireInteger } from '../stats/validate.js';

/** The 37 character values of ISO/IEC 7064 MOD 37-2: 0-9 = 0..9, A-Z = 10..35, '*' = 36. */
const MOD37_ALPHABET = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ*';

/** Check characters that read like digits on a hand-written or smudged tube label. */
/** '*' is a valid MOD 37-2 check value but awkward on a tube and in lab systems: also skipped. */
const AMBIGUOUS_CHECKS = new Set(['I', 'O', 'L', '*']);

const SITE_PATTERN = /^[A-Z0-9]{1,4}[A-Z]$/;
const ID_PATTERN = /^([A-Z0-9]{1,4}[A-Z])([0-9]{2,4})-([0-9]{3})([0-9A-Z*])$/;

/**
 * ISO/IEC 7064 pure system check value: P = 0; for each character value a: P = 2 (P + a) mod M;
 * the check value c satisfies (P + c) mod M = 1, i.e. c = (M + 1 - P) mod M.
 * @param values character values, each an integer in [0, modulus - 1]
 * @param modulus the prime modulus M (11 for MOD 11-2, 37 for MOD 37-2)
 * @returns the check value in [0, modulus - 1]
 * @throws RangeError if a value is outside [0, modulus - 1]
 * @see ISO/IEC 7064:2003, pure systems with radix 2.
 * @example pureSystemCheckValue([0,0,0,0,0,0,0,2,1,8,2,5,0,0,9], 11) === 7 // ORCID 0000-0002-1825-0097
 */
export function pureSystemCheckValue(values: readonly number[], modulus: number): number {
  let p = 0;
  for (const value of values) {
    requireInteger('value', value, 0, modulus - 1, `[0, ${modulus - 1}]`);
    p = (2 * (p + value)) % modulus;
  }
  return (modulus + 1 - p) % modulus;
}

function mod37Values(text: string): number[] {
  return [...text].map((ch) => {
    const value = MOD37_ALPHABET.indexOf(ch);
    if (value < 0 || value === 36)
      throw new RangeError(`\`text\` must contain only 0-9 and A-Z, got ${JSON.stringify(text)}`);
    return value;
  });
}

/**
 * The ISO/IEC 7064 MOD 37-2 check character of an upper-case alphanumeric string.
 * @throws RangeError if `text` contains anything but 0-9 and A-Z
 * @see ISO/IEC 7064:2003, MOD 37-2.
 * @example mod37CheckCharacter('KES07014') === 'G'
 */
export function mod37CheckCharacter(text: string): string {
  return MOD37_ALPHABET[pureSystemCheckValue(mod37Values(text), 37)]!;
}

export interface SampleIdParts {
  /** 2 to 5 characters A-Z / 0-9 ending in a letter (config). */
  siteCode: string;
  /** Round number, integer in [0, 9999]. */
  round: number;
  /** Sequence within the round, integer in [1, 999]. */
  sequence: number;
}

/**
 * Formats a sample ID `SITE RR-SSS C` (no spaces), e.g. `KES07-014G`.
 * @throws RangeError for a site code outside the grammar, a round outside [0, 9999] or a
 *   sequence outside [1, 999]
 * @see ISO/IEC 7064:2003, MOD 37-2 (check character).
 */
export function formatSampleId(parts: SampleIdParts): string {
  const siteCode = parts.siteCode.toUpperCase();
  if (!SITE_PATTERN.test(siteCode)) {
    throw new RangeError(
      `\`siteCode\` must be 2 to 5 characters A-Z or 0-9 ending in a letter, got ${JSON.stringify(parts.siteCode)}`,
    );
  }
  requireInteger('round', parts.round, 0, 9999);
  requireInteger('sequence', parts.sequence, 1, 999);
  const round = String(parts.round).padStart(2, '0');
  const sequence = String(parts.sequence).padStart(3, '0');
  return `${siteCode}${round}-${sequence}${mod37CheckCharacter(siteCode + round + sequence)}`;
}

/** True when the check character of `id` is not one of I, O, L (which read like 1 and 0) or '*'. */
export function isWriteFriendlyCheck(id: string): boolean {
  return !AMBIGUOUS_CHECKS.has(id.at(-1) ?? '');
}

export type ParsedSampleId =
  | { ok: true; siteCode: string; round: number; sequence: number; id: string }
  | { ok: false; code: 'malformed' | 'bad-check'; message: string };

function normalise(text: string): string {
  return text.replace(/\s+/g, '').toUpperCase();
}

interface GrammarMatch {
  siteCode: string;
  roundText: string;
  sequenceText: string;
  check: string;
}

function matchGrammar(text: string): GrammarMatch | null {
  const match = ID_PATTERN.exec(normalise(text));
  if (!match) return null;
  const [, siteCode, roundText, sequenceText, check] = match as unknown as [string, string, string, string, string];
  // Canonical round only (07, 123; never 007): otherwise two spellings would share one sample.
  if (roundText.length > 2 && roundText.startsWith('0')) return null;
  if (sequenceText === '000') return null;
  return { siteCode, roundText, sequenceText, check };
}

/**
 * Parses a sample ID as typed or exported by a lab: case-insensitive, white space ignored.
 * Returns a coded result, never throws.
 * `malformed`: does not match the grammar; `bad-check`: matches but the MOD 37-2 check fails
 * (a mistyped character or two swapped neighbours).
 * @see ISO/IEC 7064:2003, MOD 37-2.
 */
export function parseSampleId(text: string): ParsedSampleId {
  const match = matchGrammar(text);
  if (!match) {
    return { ok: false, code: 'malformed', message: `${JSON.stringify(text)} is not a sample ID like KES07-014G` };
  }
  const body = match.siteCode + match.roundText + match.sequenceText;
  const expected = mod37CheckCharacter(body);
  if (expected !== match.check) {
    return {
      ok: false,
      code: 'bad-check',
      message: `${JSON.stringify(text)} fails its check character: a character is mistyped or two are swapped`,
    };
  }
  return {
    ok: true,
    siteCode: match.siteCode,
    round: Number(match.roundText),
    sequence: Number(match.sequenceText),
    id: `${match.siteCode}${match.roundText}-${match.sequenceText}${match.check}`,
  };
}

/** True when `text` has the shape of a planned sample ID, whether or not its check character is right. */
export function looksLikePlannedId(text: string): boolean {
  return matchGrammar(text) !== null;
}
