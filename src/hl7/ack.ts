/**
 * The application acknowledgement of one message (HL7 Version 2.5.1, chapter 2, 2.9 "Message
 * processing rules" and 2.14/2.15 on MSA and ERR): an ACK whose MSA-1 says AA (stored, or
 * stored before), AE (read, but something in it refused: each refusal in an ERR segment naming
 * its segment, field and reason) or AR (not processed at all), and MSA-2 the message's MSH-10.
 */
import type { RejectionCode } from '../ingest/errors.js';
import { DEFAULT_ENCODING, escapeText } from './escapes.js';
import type { Hl7Location } from './hl7Error.js';
import { type Hl7Message, valueAt } from './parse.js';

export type AckCode = 'AA' | 'AE' | 'AR';

/** One refusal as the acknowledgement reports it. */
export interface AckError {
  code: RejectionCode;
  location: Hl7Location;
  text: string;
}

/** Message-level refusals after which the message is not processed at all: AR. The others are AE. */
const REJECTING: ReadonlySet<RejectionCode> = new Set<RejectionCode>([
  'malformed-message',
  'wrong-message-type',
  'unknown-sender',
  'invalid-encoding',
  'missing-value',
]);

/** The ACK code of a message refused whole with `code`. */
export function messageRefusalAck(code: RejectionCode): AckCode {
  return REJECTING.has(code) ? 'AR' : 'AE';
}

/**
 * HL7 table 0357 (message error condition codes, v2.5.1; from memory): 100 segment sequence
 * error, 101 required field missing, 102 data type error, 103 table value not found, 200
 * unsupported message type, 202 unsupported processing ID, 203 unsupported version ID, 204
 * unknown key identifier, 207 application internal error (used for refusals of ropewatch's own
 * rules: an unknown pen, a mistyped sample ID).
 */
export function errorCondition(error: AckError): string {
  switch (error.code) {
    case 'malformed-message':
    case 'missing-segment':
      return '100';
    case 'missing-value':
      return '101';
    case 'bad-ct':
    case 'bad-sp':
    case 'ct-out-of-range':
    case 'sp-out-of-range':
    case 'bad-date':
    case 'field-too-long':
    case 'invalid-encoding':
      return '102';
    case 'unknown-assay':
    case 'unmapped-result-status':
      return '103';
    case 'wrong-message-type':
      return error.location.field === 11 ? '202' : error.location.field === 12 ? '203' : '200';
    case 'unknown-sender':
      return '204';
    default:
      return '207';
  }
}

/** At most this many ERR segments: the receipt lists them all. */
export const MAX_ERR_SEGMENTS = 50;

export interface AckInput {
  /** The message acknowledged, when it could be parsed (its MSH names sender and receiver). */
  message: Hl7Message | undefined;
  controlId: string;
  code: AckCode;
  errors: readonly AckError[];
  /** The ACK's own control ID. */
  ackControlId: string;
  now: Date;
}

/** HL7 DTM of a moment, in UTC with its offset: YYYYMMDDHHMMSS+0000. */
export function dtm(moment: Date): string {
  return `${moment.toISOString().replace(/[-:T]/g, '').slice(0, 14)}+0000`;
}

/** The ACK message, segments ended by carriage returns, written with the standard encoding characters. */
export function buildAck(input: AckInput): string {
  const enc = DEFAULT_ENCODING;
  const text = (value: string) => escapeText(value, enc);
  const msh = input.message?.segments[0];
  const from = (field: number) =>
    msh === undefined || input.message === undefined ? '' : text(valueAt(input.message, msh, field));
  const version =
    msh === undefined || input.message === undefined ? '2.5.1' : valueAt(input.message, msh, 12) || '2.5.1';
  const segments = [
    // Sender and receiver swap places: the ACK goes back to the application that sent.
    [
      'MSH',
      '^~\\&',
      'ropewatch',
      from(6),
      from(3),
      from(4),
      dtm(input.now),
      '',
      'ACK^R01^ACK',
      text(input.ackControlId),
      'P',
      text(version),
    ],
    ['MSA', input.code, text(input.controlId)],
  ];
  for (const error of input.errors.slice(0, MAX_ERR_SEGMENTS)) {
    const where = error.location;
    segments.push([
      'ERR',
      '',
      [where.segment, where.sequence ?? '', where.field ?? ''].join('^').replace(/\^+$/, ''),
      `${errorCondition(error)}^^HL70357`,
      'E',
      `${text(error.code)}^^ropewatch`,
      '',
      '',
      text(error.text),
    ]);
  }
  return `${segments.map((fields) => fields.join('|')).join('\r')}\r`;
}
