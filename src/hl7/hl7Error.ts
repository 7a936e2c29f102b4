/** A refusal of an HL7 message or of one of its segments: its code, and where (segment, field). */
import { REJECTION_CODES, type RejectionCode } from '../ingest/errors.js';

export interface Hl7Location {
  /** Segment ID (MSH, OBX, ...). */
  segment: string;
  /** The segment's sequence among those of its ID in the message (1-based), when known. */
  sequence: number | undefined;
  /** Field number (5 for OBX-5), when the problem is in one field. */
  field: number | undefined;
  /** Line of the segment in its file, or its position in a received message. */
  line: number;
}

/** `OBX-5`, or `OBX` when no field is named. */
export function fieldName(location: Pick<Hl7Location, 'segment' | 'field'>): string {
  return location.field === undefined ? location.segment : `${location.segment}-${location.field}`;
}

export class Hl7Error extends Error {
  override readonly name = 'Hl7Error';
  readonly code: RejectionCode;
  readonly location: Hl7Location;
  constructor(options: Hl7Location & { code: RejectionCode; detail?: string }) {
    const { code, detail, ...location } = options;
    super(`${fieldName(location)}: ${detail ?? REJECTION_CODES[code]}`);
    this.code = code;
    this.location = location;
  }
}
