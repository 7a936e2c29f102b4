/**
 * HL7 bytes to messages: the text (UTF-8 unless MSH-18 declares ISO 8859-1), then its segment
 * lines grouped into messages, one per MSH. A file may wrap them in a batch (HL7 Version 2.5.1,
 * chapter 2, 2.10.3 "HL7 batch protocol": FHS/BHS headers, BTS/FTS trailers with counts); the
 * counts are checked, so a batch cut off in transit is refused rather than stored in part.
 */
import { Hl7Error } from './hl7Error.js';
import { encodingOf, type SegmentLine, segmentLines } from './parse.js';

const utf8 = new TextDecoder('utf-8', { fatal: true });

/**
 * The text of HL7 bytes: UTF-8 (a byte-order mark skipped), or ISO 8859-1 when the first MSH
 * declares it in MSH-18 (`8859/1`).
 * @throws Hl7Error invalid-encoding
 */
export function decodeHl7(bytes: Buffer): { text: string; note: string } {
  const body = bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf ? bytes.subarray(3) : bytes;
  const latin = body.toString('latin1');
  if (declaredCharset(latin) === '8859/1') return { text: latin, note: 'HL7 v2, ISO 8859-1 (MSH-18)' };
  try {
    return { text: utf8.decode(body), note: 'HL7 v2, UTF-8' };
  } catch {
    const at = firstInvalidUtf8(body);
    const line = latin.slice(0, at).split(/\r\n|\r|\n/).length;
    throw new Hl7Error({
      code: 'invalid-encoding',
      segment:
        latin.slice(latin.lastIndexOf('\r', at) + 1, latin.lastIndexOf('\r', at) + 4).replace(/[^A-Z0-9]/g, '') ||
        'MSH',
      sequence: undefined,
      field: undefined,
      line,
      detail: `byte ${at} is not valid UTF-8, and MSH-18 declares no other character set (ropewatch reads UTF-8 and 8859/1)`,
    });
  }
}

/** MSH-18 of the first MSH, read from its raw text (before the message is decoded). */
function declaredCharset(text: string): string {
  const start = text.indexOf('MSH');
  if (start === -1) return '';
  const separator = text.charAt(start + 3);
  if (separator === '') return '';
  const end = text.slice(start).search(/[\r\n]/);
  const fields = text.slice(start, end === -1 ? undefined : start + end).split(separator);
  // fields[0] is MSH, fields[1] MSH-2: MSH-n is fields[n - 1].
  return (fields[17] ?? '').split(text.charAt(start + 4))[0]!.trim();
}

/** The offset of the first byte that does not begin a well-formed UTF-8 character (RFC 3629, section 4). */
function firstInvalidUtf8(bytes: Buffer): number {
  let at = 0;
  while (at < bytes.length) {
    const lead = bytes[at]!;
    const length =
      lead < 0x80
        ? 1
        : lead >= 0xc2 && lead <= 0xdf
          ? 2
          : lead >= 0xe0 && lead <= 0xef
            ? 3
            : lead >= 0xf0 && lead <= 0xf4
              ? 4
              : 0;
    if (length === 0) return at;
    try {
      utf8.decode(bytes.subarray(at, at + length));
    } catch {
      return at;
    }
    at += length;
  }
  return at;
}

const BATCH_SEGMENTS = new Set(['FHS', 'BHS', 'BTS', 'FTS']);

/**
 * The messages of a text: each MSH starts one. A message over MLLP is one message, unwrapped;
 * a file is one message or a batch.
 * @throws Hl7Error malformed-message (nothing before the first MSH but batch headers; counts in BTS
 *   and FTS that do not match; a header without its trailer)
 */
export function splitMessages(text: string, source: 'file' | 'mllp'): SegmentLine[][] {
  const lines = segmentLines(text);
  const messages: SegmentLine[][] = [];
  const envelope: SegmentLine[] = [];
  for (const line of lines) {
    const id = line.text.slice(0, 3);
    if (id === 'MSH') messages.push([line]);
    else if (BATCH_SEGMENTS.has(id) && source === 'file') envelope.push(line);
    else if (messages.length === 0)
      throw malformed(
        line,
        `before the first MSH there may be only batch headers (FHS, BHS), got ${JSON.stringify(line.text.slice(0, 20))}`,
      );
    else messages.at(-1)!.push(line);
  }
  if (messages.length === 0)
    throw malformed(lines[0] ?? { text: '', line: 1 }, 'no MSH segment: not an HL7 v2 message');
  if (source === 'mllp' && messages.length > 1)
    throw malformed(messages[1]![0]!, 'an MLLP frame carries one message; this one holds a second MSH');
  checkEnvelope(envelope, messages.length);
  return messages;
}

function malformed(at: SegmentLine, detail: string): Hl7Error {
  return new Hl7Error({
    code: 'malformed-message',
    segment: at.text.slice(0, 3).replace(/[^A-Z0-9]/g, '') || 'MSH',
    sequence: undefined,
    field: undefined,
    line: at.line,
    detail,
  });
}

/** FHS goes with FTS, BHS with BTS; BTS-1 counts the batch's messages, FTS-1 the file's batches. */
function checkEnvelope(envelope: readonly SegmentLine[], messageCount: number): void {
  const find = (id: string) => envelope.filter((line) => line.text.startsWith(id));
  for (const header of [...find('FHS'), ...find('BHS')]) encodingOf(header);
  const pairs: [string, string][] = [
    ['FHS', 'FTS'],
    ['BHS', 'BTS'],
  ];
  for (const [open, close] of pairs) {
    const opened = find(open);
    const closed = find(close);
    if (opened.length !== closed.length)
      throw malformed(
        opened[0] ?? closed[0]!,
        `${open} and ${close} do not pair up (${opened.length} ${open}, ${closed.length} ${close}): the batch is cut off or broken`,
      );
  }
  const bts = find('BTS');
  if (bts.length === 1) {
    const separator = find('BHS')[0]!.text.charAt(3);
    const count = bts[0]!.text.split(separator)[1] ?? '';
    if (count !== '' && Number(count) !== messageCount)
      throw malformed(
        bts[0]!,
        `BTS-1 counts ${count} message(s), the batch holds ${messageCount}: the batch is cut off or broken`,
      );
  }
}
