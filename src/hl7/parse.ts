/**
 * A small HL7 v2 parser (HL7 Version 2.5.1, chapter 2 "Control", 2.5 "Message construction
 * rules"): segments separated by a carriage return, fields by MSH-1, and within a field
 * repetitions, components and sub-components by the encoding characters MSH-2 declares, each
 * message its own. Values come out with their escape sequences replaced (escapes.ts). Pure: text
 * in, segments out, or an Hl7Error naming the segment and field.
 */
import { DEFAULT_ENCODING, type EncodingCharacters, unescapeText } from './escapes.js';
import { Hl7Error } from './hl7Error.js';

export { DEFAULT_ENCODING, type EncodingCharacters, Hl7Error };

/**
 * The longest field read: the largest length HL7 v2.5.1 gives a text field (TX, FT: 65536).
 * A longer field is refused whole, never cut.
 */
export const MAX_FIELD_CHARS = 65_536;

export interface Segment {
  /** Segment ID: three capitals or digits (MSH, OBR, OBX, SPM, ...). */
  id: string;
  /**
   * Fields by their HL7 number: `fields[5]` is OBX-5. For MSH, `fields[1]` is the field
   * separator and `fields[2]` the encoding characters, as the standard numbers them.
   */
  fields: readonly string[];
  /** Line of the segment in its file (or its position in a message received over MLLP), 1-based. */
  line: number;
  /** The how-manieth segment of this ID in its message, 1-based (ERR-2's segment sequence). */
  sequence: number;
}

export interface Hl7Message {
  enc: EncodingCharacters;
  segments: readonly Segment[];
}

/** One segment of text and the line it starts on. */
export interface SegmentLine {
  text: string;
  line: number;
}

/**
 * Splits text into segment lines. The standard ends a segment with a carriage return; files
 * that passed through other systems often carry CR LF or LF, and all three are taken.
 * Blank lines are skipped.
 */
export function segmentLines(text: string, firstLine = 1): SegmentLine[] {
  const out: SegmentLine[] = [];
  const parts = text.split(/\r\n|\r|\n/);
  for (let index = 0; index < parts.length; index++) {
    const part = parts[index]!;
    if (part.trim() === '') continue;
    out.push({ text: part, line: firstLine + index });
  }
  return out;
}

/**
 * The encoding characters a header segment (MSH, BHS, FHS) declares: the character after the
 * segment ID separates fields, and the next four are component, repetition, escape and
 * sub-component separators (2.5.1 takes exactly four). They must differ from each other and
 * from the field separator, and none may be a letter, a digit or white space.
 * @throws Hl7Error malformed-message naming `<ID>-1` or `<ID>-2`
 */
export function encodingOf(header: SegmentLine): EncodingCharacters {
  const id = header.text.slice(0, 3);
  const field = header.text.charAt(3);
  const bad = (fieldNo: number, detail: string) =>
    new Hl7Error({ code: 'malformed-message', segment: id, sequence: 1, field: fieldNo, line: header.line, detail });
  if (field === '' || /[\sA-Za-z0-9]/.test(field))
    throw bad(
      1,
      `${id}-1 must be the field separator (a punctuation character such as |), got ${JSON.stringify(field)}`,
    );
  const end = header.text.indexOf(field, 4);
  const chars = end === -1 ? header.text.slice(4) : header.text.slice(4, end);
  if (chars.length !== 4)
    throw bad(
      2,
      `${id}-2 must hold exactly four encoding characters (component, repetition, escape, sub-component, such as ^~\\&), got ${JSON.stringify(chars)}`,
    );
  const all = [field, ...chars];
  if (new Set(all).size !== all.length || all.some((char) => /[\sA-Za-z0-9]/.test(char)))
    throw bad(
      2,
      `${id}-2 encoding characters ${JSON.stringify(chars)} must differ from each other and from the field separator, and none may be a letter, digit or space`,
    );
  return { field, component: chars[0]!, repetition: chars[1]!, escape: chars[2]!, subComponent: chars[3]! };
}

const SEGMENT_ID = /^[A-Z][A-Z0-9]{2}$/;

/**
 * Parses one message from its segment lines (the first must be MSH).
 * @throws Hl7Error malformed-message (no MSH first, bad encoding characters, a segment ID that is not
 *   one), field-too-long
 */
export function parseMessage(lines: readonly SegmentLine[]): Hl7Message {
  const first = lines[0];
  if (first === undefined || !first.text.startsWith('MSH'))
    throw new Hl7Error({
      code: 'malformed-message',
      segment: 'MSH',
      sequence: 1,
      field: undefined,
      line: first?.line ?? 1,
      detail: `a message must begin with an MSH segment, got ${JSON.stringify((first?.text ?? '').slice(0, 20))}`,
    });
  const enc = encodingOf(first);
  const counts = new Map<string, number>();
  const segments: Segment[] = [];
  for (const { text, line } of lines) {
    const id = text.slice(0, 3);
    if (!SEGMENT_ID.test(id) || (text.length > 3 && text.charAt(3) !== enc.field))
      throw new Hl7Error({
        code: 'malformed-message',
        segment: id,
        sequence: undefined,
        field: undefined,
        line,
        detail: `not a segment: a segment begins with a three-character ID and the field separator ${enc.field}, got ${JSON.stringify(text.slice(0, 20))}`,
      });
    const sequence = (counts.get(id) ?? 0) + 1;
    counts.set(id, sequence);
    const fields = text.split(enc.field);
    // MSH-1 is the field separator itself: numbering shifts by one so that fields[n] is MSH-n.
    if (id === 'MSH') fields.splice(1, 0, enc.field);
    fields.forEach((value, index) => {
      if (value.length > MAX_FIELD_CHARS)
        throw new Hl7Error({
          code: 'field-too-long',
          segment: id,
          sequence,
          field: index,
          line,
          detail: `${id}-${index} holds ${value.length} characters; at most ${MAX_FIELD_CHARS} are read (the longest an HL7 text field may be)`,
        });
    });
    segments.push({ id, fields, line, sequence });
  }
  return { enc, segments };
}

/** A field as written (escape sequences and separators still in it); '' when absent. */
export function rawField(segment: Segment, field: number): string {
  return segment.fields[field] ?? '';
}

/** The repetitions of a field, as written (MSH-2 never repeats). */
export function repetitions(message: Hl7Message, segment: Segment, field: number): string[] {
  const raw = rawField(segment, field);
  if (segment.id === 'MSH' && field <= 2) return [raw];
  return raw.split(message.enc.repetition);
}

/**
 * One value: field `field`, repetition `repetition` (0 = first), component `component` and
 * sub-component `subComponent` (1-based, as HL7 numbers them), escape sequences replaced.
 * '' when absent.
 */
export function valueAt(
  message: Hl7Message,
  segment: Segment,
  field: number,
  component = 1,
  subComponent = 1,
  repetition = 0,
): string {
  if (segment.id === 'MSH' && field <= 2) return rawField(segment, field);
  const rep = repetitions(message, segment, field)[repetition] ?? '';
  const comp = rep.split(message.enc.component)[component - 1] ?? '';
  const sub = comp.split(message.enc.subComponent)[subComponent - 1] ?? '';
  return unescapeText(sub, message.enc);
}

/** Every component of a field's first repetition, each unescaped (sub-components kept joined). */
export function components(message: Hl7Message, segment: Segment, field: number): string[] {
  const rep = repetitions(message, segment, field)[0] ?? '';
  return rep.split(message.enc.component).map((part) => unescapeText(part, message.enc));
}
