import type { Config, SampleIdCorrection } from '../config/types.js';
import { looksLikePlannedId, parseSampleId } from '../plan/sampleId.js';
import type { PlannedIdCheck } from './recordCells.js';

/**
 * The planned-ID check for a configuration: only IDs that start with a configured site code are
 * held to the check character, so a lab's or farm's own numbering is never refused by it.
 * `corrections` are the confirmed corrections that apply to this file (see correctionsForFile):
 * an ID a person confirmed as mistyped is read as the ID it meant, on the line named or on every
 * line when none is.
 */
export function plannedIdChecker(
  config: Pick<Config, 'sites'> & { corrections?: readonly SampleIdCorrection[] | undefined },
): PlannedIdCheck {
  const codes = config.sites.map((site) => site.code);
  const corrections = new Map<string, SampleIdCorrection[]>();
  for (const correction of config.corrections ?? []) {
    const list = corrections.get(correction.written);
    if (list) list.push(correction);
    else corrections.set(correction.written, [correction]);
  }
  const grammarVerdict = (sampleId: string): GrammarVerdict => {
    if (!looksLikePlannedId(sampleId)) return OTHER;
    const parsed = parseSampleId(sampleId);
    if (parsed.ok) return codes.includes(parsed.siteCode) ? { kind: 'planned', canonical: parsed.id } : OTHER;
    return codes.some((code) => sampleId.startsWith(code) && /^\d/.test(sampleId.slice(code.length)))
      ? BAD_CHECK
      : OTHER;
  };
  // A sample's assays come on neighbouring rows: the grammar's verdict on the last ID is kept
  // (it depends on the ID alone; a correction, which may name a line, is looked up every time).
  let lastId: string | undefined;
  let lastVerdict: GrammarVerdict = OTHER;
  return (sampleId, line) => {
    if (corrections.size > 0) {
      const listed = corrections.get(sampleId);
      if (listed !== undefined) {
        // A correction for this very line wins over one for the ID anywhere in the file.
        const correction =
          listed.find((entry) => entry.line === line) ?? listed.find((entry) => entry.line === undefined);
        if (correction !== undefined) return { kind: 'corrected', canonical: correction.meant, written: sampleId };
      }
    }
    if (sampleId !== lastId) {
      lastVerdict = grammarVerdict(sampleId);
      lastId = sampleId;
    }
    return lastVerdict;
  };
}

/** What the planned-ID grammar alone says of an ID (no correction applied). */
type GrammarVerdict = Exclude<ReturnType<PlannedIdCheck>, { kind: 'corrected' }>;
const OTHER: GrammarVerdict = Object.freeze({ kind: 'other' });
const BAD_CHECK: GrammarVerdict = Object.freeze({ kind: 'bad-check' });

/**
 * The corrections that apply to a file: those without a file, and those naming it by the name it
 * arrived under or by the name its bytes were first stored as (a file read again from
 * inbox/archive/ may carry a hash in its name there).
 */
export function correctionsForFile(
  corrections: readonly SampleIdCorrection[],
  names: readonly string[],
): SampleIdCorrection[] {
  return corrections.filter((correction) => correction.file === undefined || names.includes(correction.file));
}

/** The characters of the MOD 37-2 alphabet a sample ID's body and check character may hold. */
const ID_CHARACTERS = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZ';

/** How a candidate differs from the ID as written. */
export type MistypeKind = 'substitution' | 'transposition';

export interface MeantId {
  id: string;
  kind: MistypeKind;
}

/**
 * The valid sample IDs one keying error away from `written` that `isPlanned` accepts: every
 * single substitution of a character, and every swap of two neighbouring characters (the hyphen
 * is skipped over, as a person keying the ID skips it). These are the two errors MOD 37-2 is
 * certain to detect, and the commonest keying errors (Verhoeff 1969, Error detecting decimal
 * codes, from memory: single errors and adjacent transpositions make up most of them); a planned
 * ID is the only kind of ID a check character protects, so only planned IDs are candidates.
 * Sorted by ID.
 * @see ISO/IEC 7064:2003, MOD 37-2.
 */
export function likelyMeantIds(written: string, isPlanned: (id: string) => boolean): MeantId[] {
  const text = written.replace(/\s+/g, '').toUpperCase();
  const found = new Map<string, MistypeKind>();
  const consider = (candidate: string, kind: MistypeKind) => {
    if (candidate === text || found.has(candidate)) return;
    const parsed = parseSampleId(candidate);
    if (parsed.ok && isPlanned(parsed.id)) found.set(parsed.id, kind);
  };
  const chars = [...text];
  const positions = chars.flatMap((ch, index) => (ch === '-' ? [] : [index]));
  for (const index of positions) {
    const original = chars[index]!;
    for (const replacement of ID_CHARACTERS) {
      if (replacement === original) continue;
      chars[index] = replacement;
      consider(chars.join(''), 'substitution');
    }
    chars[index] = original;
  }
  for (let k = 0; k + 1 < positions.length; k++) {
    const a = positions[k]!;
    const b = positions[k + 1]!;
    if (chars[a] === chars[b]) continue;
    [chars[a], chars[b]] = [chars[b]!, chars[a]!];
    consider(chars.join(''), 'transposition');
    [chars[a], chars[b]] = [chars[b]!, chars[a]!];
  }
  return [...found].map(([id, kind]) => ({ id, kind })).sort((x, y) => (x.id < y.id ? -1 : x.id > y.id ? 1 : 0));
}
