/**
 * Bytes to text. Byte-order marks and encodings follow the Unicode Standard (ch. 2.13, 23.8:
 * EF BB BF for UTF-8, FF FE for UTF-16LE) and the WHATWG Encoding Standard (TextDecoder); the
 * expected bytes here are produced by Node's Buffer encoders, an oracle outside the project.
 */
import { describe, expect, it } from 'vitest';
import {
  BinaryContentError,
  decodeHead,
  EncodingError,
  sniffEncoding,
  TextChunkDecoder,
  type Sniffed,
} from '../../src/ingest/decode.js';

async function decodeChunks(chunks: readonly Buffer[], sniffed: Sniffed): Promise<string> {
  const decoder = new TextChunkDecoder(sniffed);
  return chunks.map((chunk) => decoder.decode(chunk)).join('') + decoder.end();
}

async function decodeError(chunks: readonly Buffer[], sniffed: Sniffed): Promise<unknown> {
  try {
    await decodeChunks(chunks, sniffed);
  } catch (error) {
    return error;
  }
  return undefined;
}

const text = 'Probe;Befund\nTR-N1-07;Schweinegrippe ungültig\n';

describe('sniffEncoding', () => {
  it('reads UTF-8 with and without a byte-order mark', () => {
    const plain = Buffer.from(text, 'utf8');
    const bom = Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), plain]);
    expect(sniffEncoding(plain, 'auto')).toMatchObject({ encoding: 'utf-8', bomLength: 0 });
    expect(sniffEncoding(bom, 'auto')).toMatchObject({ encoding: 'utf-8', bomLength: 3 });
    // A BOM wins over a declared encoding.
    expect(sniffEncoding(bom, 'latin1')).toMatchObject({ encoding: 'utf-8', bomLength: 3 });
  });

  it('reads UTF-16LE by its byte-order mark and by its NUL pattern', () => {
    const wide = Buffer.from(text, 'utf16le');
    expect(sniffEncoding(Buffer.concat([Buffer.from([0xff, 0xfe]), wide]), 'auto')).toMatchObject({
      encoding: 'utf-16le',
      bomLength: 2,
    });
    expect(sniffEncoding(wide, 'auto')).toMatchObject({ encoding: 'utf-16le', bomLength: 0 });
  });

  it('falls back to Latin-1 when the first block is not UTF-8', () => {
    expect(sniffEncoding(Buffer.from(text, 'latin1'), 'auto')).toMatchObject({ encoding: 'latin1' });
  });

  it('does not call a UTF-8 character cut at the end of the sniffed block invalid', () => {
    const full = Buffer.from('abc;ü', 'utf8');
    expect(sniffEncoding(full.subarray(0, full.length - 1), 'auto').encoding).toBe('utf-8');
  });

  it('refuses binary content', () => {
    const png = Buffer.from([
      0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0x00, 0x00, 0x00, 0x0d, 0x49, 0x48, 0x44, 0x52,
    ]);
    expect(() => sniffEncoding(png, 'auto')).toThrow(BinaryContentError);
    const controls = Buffer.from(Array.from({ length: 200 }, (_, i) => (i % 3 === 0 ? 0x01 : 0x41)));
    expect(() => sniffEncoding(controls, 'utf-8')).toThrow(BinaryContentError);
  });
});

describe('TextChunkDecoder', () => {
  const utf8: Sniffed = { encoding: 'utf-8', bomLength: 0, note: '' };

  it('folds CRLF, LF and lone CR to LF, also when CRLF is split across chunks', async () => {
    expect(await decodeChunks([Buffer.from('a\r\nb\nc\rd\r\n')], utf8)).toBe('a\nb\nc\nd\n');
    expect(await decodeChunks([Buffer.from('a\r'), Buffer.from('\nb\r'), Buffer.from('c')], utf8)).toBe('a\nb\nc');
    expect(await decodeChunks([Buffer.from('a\r'), Buffer.from('\r\nb')], utf8)).toBe('a\n\nb');
  });

  it('skips the byte-order mark and keeps a multi-byte character split across chunks', async () => {
    const bytes = Buffer.concat([Buffer.from([0xef, 0xbb, 0xbf]), Buffer.from('x;ü\n', 'utf8')]);
    const sniffed = sniffEncoding(bytes, 'auto');
    // Cut inside the BOM and inside the two bytes of "ü" (C3 BC).
    expect(await decodeChunks([bytes.subarray(0, 2), bytes.subarray(2, 6), bytes.subarray(6)], sniffed)).toBe('x;ü\n');
  });

  it('decodes UTF-16LE with a byte-order mark', async () => {
    const bytes = Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from('Probe;Ct\r\nA;31,5\r\n', 'utf16le')]);
    const sniffed = sniffEncoding(bytes, 'auto');
    expect(await decodeChunks([bytes.subarray(0, 5), bytes.subarray(5)], sniffed)).toBe('Probe;Ct\nA;31,5\n');
    expect(decodeHead(bytes, sniffed)).toBe('Probe;Ct\nA;31,5\n');
  });

  it('decodes Latin-1 bytes to the same characters', async () => {
    const bytes = Buffer.from('Befund;ungültig\r\n', 'latin1');
    expect(await decodeChunks([bytes], sniffEncoding(bytes, 'auto'))).toBe('Befund;ungültig\n');
  });

  it('refuses invalid UTF-8 when UTF-8 is declared and names the line of the bad byte', async () => {
    const lines = ['h1,h2', 'a,1', 'b,2', 'c,3'];
    const bytes = Buffer.concat([Buffer.from(lines.join('\n') + '\n'), Buffer.from([0x64, 0x2c, 0xff, 0x0a])]);
    const error = await decodeError([bytes], sniffEncoding(bytes, 'utf-8'));
    expect(error).toBeInstanceOf(EncodingError);
    // By hand: the 0xFF byte sits on line 5 (four lines before it).
    expect((error as EncodingError).line).toBe(5);
  });

  it('names the line of an invalid byte in a later chunk', async () => {
    const first = Buffer.from('h1,h2\na,1\n');
    const second = Buffer.from('b,2\nc,');
    const bad = Buffer.from([0xc3, 0x28, 0x0a]); // C3 followed by a non-continuation byte
    const error = await decodeError([first, second, bad], { encoding: 'utf-8', bomLength: 0, note: '' });
    expect(error).toBeInstanceOf(EncodingError);
    expect((error as EncodingError).line).toBe(4);
  });

  it('refuses a file that ends inside a UTF-8 character', async () => {
    const error = await decodeError([Buffer.from([0x61, 0x0a, 0xe2, 0x82])], utf8);
    expect(error).toBeInstanceOf(EncodingError);
    expect((error as EncodingError).line).toBe(2);
  });
});
