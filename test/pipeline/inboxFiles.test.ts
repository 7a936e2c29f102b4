/**
 * The names ropewatch derives from an input's name (src/inboxFiles.ts) and the escaping of text
 * printed to a terminal (src/util/terminalText.ts), as properties over arbitrary names.
 *
 * The limit checked is NAME_MAX = 255 bytes per path component (POSIX <limits.h>; 255 on Linux
 * ext4/XFS/Btrfs/tmpfs, from memory), counted in UTF-8 bytes by Buffer.byteLength (the encoding
 * Node uses for paths). The temp name is the one src/report/files.ts writes before its rename.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  cutToBytes,
  destinationName,
  fitName,
  NAME_MAX_BYTES,
  reasonPath,
  receiptNames,
  splitExtension,
} from '../../src/inboxFiles.js';
import { terminalText } from '../../src/util/terminalText.js';

const bytes = (text: string) => Buffer.byteLength(text, 'utf8');
/** The temp name of src/report/files.ts writeFileAtomic with the largest pid (2^22, proc(5)) and counter (2^53). */
const tempName = (name: string) => `.${name}.${2 ** 22}.${Number.MAX_SAFE_INTEGER}.tmp`;
const SHA = 'a3f9c0121b7e4d55aa00aa00aa00aa00aa00aa00aa00aa00aa00aa00aa00aa00';

/** One character of a file name: ASCII, Latin-1 accents (2 bytes), CJK and euro (3), astral (4), or any code point. */
const nameChar = fc.oneof(
  fc.constantFrom('a', 'Z', '0', '_', '-', ' ', '.', 'é', 'ü', '€', '日', '本', '🐖', '𝄞'),
  fc.string({ unit: 'binary', minLength: 1, maxLength: 1 }),
);
/**
 * A file name of 1 to 255 UTF-8 bytes: no `/`, no NUL, valid UTF-8, not `.` or `..`. Built by
 * whole characters and cut by bytes; half of them are long (near the limit is where names break).
 */
const fileName = fc
  .tuple(
    fc.oneof(
      fc.array(nameChar, { minLength: 1, maxLength: 40 }),
      fc.array(nameChar, { minLength: 60, maxLength: 260, size: 'max' }),
    ),
    fc.constantFrom('', '.csv', '.CSV', '.tsv', '.txt', '.tar.gz'),
  )
  .map(([chars, ext]) => {
    let name = '';
    for (const char of chars) {
      if (char === '/' || char === '\u0000') continue;
      if (bytes(name + char + ext) > NAME_MAX_BYTES) break;
      name += char;
    }
    return name + ext;
  })
  .filter(
    (name) => name !== '' && name !== '.' && name !== '..' && Buffer.from(name, 'utf8').toString('utf8') === name,
  );

/** Length in bytes of the longest common prefix (whole code points) of two strings. */
function commonPrefixBytes(a: string, b: string): number {
  const left = [...a];
  const right = [...b];
  let n = 0;
  let total = 0;
  while (n < left.length && n < right.length && left[n] === right[n]) total += bytes(left[n++]!);
  return total;
}

describe('derived file names stay within 255 bytes', () => {
  it('receipt names (and their temp names) fit, keep the name when it fits, and share one base', () => {
    fc.assert(
      fc.property(fileName, fc.constantFrom(SHA, ''), (name, sha) => {
        const { json, txt } = receiptNames(name, sha);
        expect(bytes(tempName(json))).toBeLessThanOrEqual(NAME_MAX_BYTES);
        expect(bytes(tempName(txt))).toBeLessThanOrEqual(NAME_MAX_BYTES);
        expect(json.slice(0, -'.json'.length)).toBe(txt.slice(0, -'.txt'.length));
        const stamp = sha === '' ? 'unread' : sha.slice(0, 8);
        expect(json.endsWith(`.${stamp}.receipt.json`)).toBe(true);
        // Names of up to 190 bytes (most) are kept whole: 190 + 22 bytes of ending + 30 of temp name < 255.
        if (bytes(name) <= 190) expect(json).toBe(`${name}.${stamp}.receipt.json`);
        // Recognisable: at least 150 bytes of the original name (or all of it) open the receipt name.
        expect(commonPrefixBytes(json, name)).toBeGreaterThanOrEqual(Math.min(bytes(name), 150));
        expect(Buffer.from(json, 'utf8').toString('utf8')).toBe(json);
      }),
      { numRuns: 400 },
    );
  });

  it('archive/ and rejected/ names fit (a rejected name with its .reason.txt temp name too) and keep the extension', () => {
    fc.assert(
      fc.property(fileName, fc.boolean(), fc.boolean(), (name, rejected, taken) => {
        const moved = destinationName(name, SHA, { rejected, taken });
        expect(bytes(moved)).toBeLessThanOrEqual(NAME_MAX_BYTES);
        if (rejected) expect(bytes(tempName(reasonPath(moved)))).toBeLessThanOrEqual(NAME_MAX_BYTES);
        const { ext } = splitExtension(name);
        expect(moved.endsWith(taken ? `.${SHA.slice(0, 8)}${ext}` : ext)).toBe(true);
        if (!rejected && !taken) expect(moved).toBe(name); // any name the file system holds fits as it is
        if (bytes(name) <= 190)
          expect(moved).toBe(taken ? `${splitExtension(name).stem}.${SHA.slice(0, 8)}${ext}` : name);
        expect(commonPrefixBytes(moved, name)).toBeGreaterThanOrEqual(Math.min(bytes(splitExtension(name).stem), 150));
      }),
      { numRuns: 400 },
    );
  });

  it('keeps two different names apart, also when they differ only after the cut', () => {
    fc.assert(
      fc.property(fileName, fileName, (a, b) => {
        fc.pre(a !== b);
        expect(receiptNames(a, SHA).json).not.toBe(receiptNames(b, SHA).json);
        expect(destinationName(a, SHA, { rejected: true, taken: false })).not.toBe(
          destinationName(b, SHA, { rejected: true, taken: false }),
        );
      }),
      { numRuns: 200 },
    );
    // 240 bytes in common, then different endings: only the hash fragment tells them apart.
    const stem = '€'.repeat(80);
    const [a, b] = [`${stem}-1.csv`, `${stem}-2.csv`];
    expect(receiptNames(a, SHA).json).not.toBe(receiptNames(b, SHA).json);
    expect(destinationName(a, SHA, { rejected: true, taken: false })).not.toBe(
      destinationName(b, SHA, { rejected: true, taken: false }),
    );
  });

  it('cuts at whole characters, never inside a multibyte one', () => {
    // '€' is 3 bytes in UTF-8 (RFC 3629, E2 82 AC): 10 bytes hold three of them, not three and a third.
    expect(cutToBytes('€€€€', 10)).toBe('€€€');
    expect(cutToBytes('🐖🐖', 7)).toBe('🐖'); // 4 bytes each (RFC 3629), a surrogate pair in JavaScript
    expect(fitName('a'.repeat(300), '.csv', 255)).toMatch(/^a{242}~[0-9a-f]{8}\.csv$/); // 242 + 9 + 4 = 255
  });
});

describe('terminalText', () => {
  const UNSAFE = /[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/;

  it('escapes C0, DEL, C1 and bidi formatting characters visibly and leaves other text alone', () => {
    // ECMA-48 5th ed. sections 5.2-5.3: C0 is 00-1F, C1 is 80-9F (CSI = 9B); DEL is 7F (ECMA-6).
    expect(terminalText('a\u001b[2Jb')).toBe('a\\x1b[2Jb');
    expect(terminalText('line\nnext\rtab\t')).toBe('line\\nnext\\rtab\\t');
    expect(terminalText('\u009b31m\u007f\u0000')).toBe('\\x9b31m\\x7f\\x00');
    // Unicode Standard Annex #9, section 2: U+202E RIGHT-TO-LEFT OVERRIDE, U+2066 LEFT-TO-RIGHT ISOLATE.
    expect(terminalText('x\u202etxt.exe\u2066')).toBe('x\\u202etxt.exe\\u2066');
    expect(terminalText('Ferkel-Stall 3 · Bucht 12 €')).toBe('Ferkel-Stall 3 · Bucht 12 €');
  });

  it('leaves no control character in any text, and changes text that has none not at all', () => {
    fc.assert(
      fc.property(fc.string({ unit: 'binary', maxLength: 80 }), (text) => {
        const shown = terminalText(text);
        expect(UNSAFE.test(shown)).toBe(false);
        if (!UNSAFE.test(text)) expect(shown).toBe(text);
      }),
      { numRuns: 500 },
    );
  });
});
