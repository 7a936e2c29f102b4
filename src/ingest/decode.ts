/**
 * Bytes to text: byte-order marks, the declared or sniffed encoding, and line endings folded to
 * LF so that line numbers count the way a person counts them in an editor.
 */

export type TextEncoding = 'utf-8' | 'latin1' | 'utf-16le' | 'utf-16be';

export interface Sniffed {
  encoding: TextEncoding;
  /** Bytes of byte-order mark to skip. */
  bomLength: number;
  /** Why this encoding was chosen, for the receipt. */
  note: string;
}

/** Looks like binary: NUL bytes outside a UTF-16 pattern, or many control characters. */
function looksBinary(bytes: Uint8Array): boolean {
  let control = 0;
  for (const byte of bytes) {
    if (byte === 0) return true;
    if (byte < 9 || (byte > 13 && byte < 32)) control++;
  }
  return bytes.length > 0 && control / bytes.length > 0.05;
}

function nulPattern(bytes: Uint8Array): 'utf-16le' | 'utf-16be' | undefined {
  const n = Math.min(bytes.length - (bytes.length % 2), 4096);
  if (n < 4) return undefined;
  let evenNul = 0;
  let oddNul = 0;
  for (let i = 0; i < n; i += 2) {
    if (bytes[i] === 0) evenNul++;
    if (bytes[i + 1] === 0) oddNul++;
  }
  const pairs = n / 2;
  if (oddNul / pairs > 0.3 && evenNul / pairs < 0.05) return 'utf-16le';
  if (evenNul / pairs > 0.3 && oddNul / pairs < 0.05) return 'utf-16be';
  return undefined;
}

export class EncodingError extends Error {
  override readonly name = 'EncodingError';
  constructor(
    readonly line: number,
    detail: string,
  ) {
    super(detail);
  }
}

export class BinaryContentError extends Error {
  override readonly name = 'BinaryContentError';
}

/**
 * Chooses the encoding from the first bytes of a file and what the lab profile declares.
 * A BOM always wins. Under `auto`, UTF-8 is tried first and Latin-1 is the fallback when the
 * first block is not valid UTF-8 (the usual case for exports from older lab systems).
 * @throws BinaryContentError when the bytes are not text at all.
 */
export function sniffEncoding(head: Uint8Array, declared: TextEncoding | 'auto'): Sniffed {
  if (head[0] === 0xef && head[1] === 0xbb && head[2] === 0xbf)
    return { encoding: 'utf-8', bomLength: 3, note: 'UTF-8 byte-order mark' };
  if (head[0] === 0xff && head[1] === 0xfe)
    return { encoding: 'utf-16le', bomLength: 2, note: 'UTF-16LE byte-order mark' };
  if (head[0] === 0xfe && head[1] === 0xff)
    return { encoding: 'utf-16be', bomLength: 2, note: 'UTF-16BE byte-order mark' };
  const wide = nulPattern(head);
  if (wide)
    return { encoding: wide, bomLength: 0, note: `${wide.toUpperCase()} by its byte pattern (no byte-order mark)` };
  if (looksBinary(head)) throw new BinaryContentError('the file holds binary content, not delimited text');
  if (declared !== 'auto') return { encoding: declared, bomLength: 0, note: `${declared} as the lab profile declares` };
  try {
    // A truncated multi-byte sequence at the end of the sniffed block is not an error.
    new TextDecoder('utf-8', { fatal: true }).decode(head, { stream: true });
    return { encoding: 'utf-8', bomLength: 0, note: 'UTF-8 (valid in the first block)' };
  } catch {
    return { encoding: 'latin1', bomLength: 0, note: 'Latin-1 (the first block is not valid UTF-8)' };
  }
}

/**
 * Bytes to text, chunk by chunk, with CRLF and lone CR folded to LF.
 * @throws EncodingError naming the line of the first invalid byte.
 */
export class TextChunkDecoder {
  private readonly decoder: TextDecoder;
  /** A lenient twin fed the same bytes: when the strict decoder fails on a chunk, the twin's
   * output up to its first U+FFFD tells on which line the bad byte sits (a chunk holds many lines). */
  private readonly twin: TextDecoder;
  private skip: number;
  private pendingCr = false;
  private line = 1;

  constructor(private readonly sniffed: Sniffed) {
    const label = sniffed.encoding === 'latin1' ? 'latin1' : sniffed.encoding;
    this.decoder = new TextDecoder(label, { fatal: sniffed.encoding !== 'latin1', ignoreBOM: true });
    this.twin = new TextDecoder(label, { fatal: false, ignoreBOM: true });
    this.skip = sniffed.bomLength;
  }

  decode(chunk: Uint8Array): string {
    let bytes = chunk;
    if (this.skip > 0) {
      const cut = Math.min(this.skip, bytes.length);
      bytes = bytes.subarray(cut);
      this.skip -= cut;
    }
    let text: string;
    try {
      text = this.decoder.decode(bytes, { stream: true });
    } catch {
      const badLine = this.lineOfBadByte(this.twin.decode(bytes, { stream: true }));
      throw new EncodingError(badLine, `the bytes on line ${badLine} are not valid ${this.sniffed.encoding}`);
    }
    // The twin must see every chunk to stay in step with the strict decoder (Latin-1 never fails).
    if (this.sniffed.encoding !== 'latin1') this.twin.decode(bytes, { stream: true });
    return this.fold(text);
  }

  end(): string {
    try {
      return this.fold(this.decoder.decode());
    } catch {
      throw new EncodingError(
        this.line,
        `the file ends inside an incomplete ${this.sniffed.encoding} character (line ${this.line})`,
      );
    }
  }

  private lineOfBadByte(lenient: string): number {
    let prefix = lenient.slice(0, Math.max(0, lenient.indexOf('\uFFFD')));
    if (this.pendingCr && prefix.startsWith('\n')) prefix = prefix.slice(1);
    return this.line + (prefix.match(/\r\n|\r|\n/g)?.length ?? 0);
  }

  private fold(text: string): string {
    // A chunk that ends inside a character decodes to nothing: it must not clear a pending CR,
    // or a UTF-16 CRLF split after its CR would become two line breaks.
    if (text === '') return '';
    let input = text;
    if (this.pendingCr) {
      if (input.startsWith('\n')) input = input.slice(1);
      this.pendingCr = false;
    }
    if (input.endsWith('\r')) {
      this.pendingCr = true;
      input = input.slice(0, -1) + '\n';
    }
    const out = input.indexOf('\r') === -1 ? input : input.replace(/\r\n?/g, '\n');
    for (let i = out.indexOf('\n'); i !== -1; i = out.indexOf('\n', i + 1)) this.line++;
    return out;
  }
}

/** Decodes a whole (small) buffer the same way, for sniffing headers. Invalid bytes become U+FFFD. */
export function decodeHead(head: Uint8Array, sniffed: Sniffed): string {
  const text = new TextDecoder(sniffed.encoding === 'latin1' ? 'latin1' : sniffed.encoding, {
    fatal: false,
    ignoreBOM: true,
  }).decode(head.subarray(sniffed.bomLength), { stream: true });
  return text.replace(/\r\n?/g, '\n');
}
