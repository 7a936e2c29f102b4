/**
 * Text that came from a file (its name, a sample ID, an assay name, a refusal quoting a cell)
 * made safe to print on a terminal or in a text receipt.
 *
 * A terminal acts on control characters: ESC starts an ECMA-48 control sequence (clear the
 * screen, move the cursor, set the window title), CR returns to the start of the line, BS moves
 * back, and the C1 controls U+0080 to U+009F (CSI is U+009B) act like ESC sequences on terminals
 * that take 8-bit controls (ECMA-48, 5th edition 1991, sections 5.2 and 5.3). A file named so
 * could overwrite what the operator reads. The explicit bidirectional formatting characters
 * (U+202A to U+202E, U+2066 to U+2069; Unicode Standard Annex #9, section 2) reorder what
 * follows them on screen and are escaped too.
 *
 * Each such character is written as a visible escape: `\n`, `\r`, `\t`, else `\xHH` below
 * U+0100 and `\uHHHH` above. The escape is for reading, not reversible (a backslash is left as
 * it is); the JSON receipts keep the raw values.
 */

// C0 (U+0000 to U+001F), DEL (U+007F), C1 (U+0080 to U+009F), bidi embeddings, overrides and isolates.
const UNSAFE = /[\u0000-\u001f\u007f-\u009f\u202a-\u202e\u2066-\u2069]/g;

const NAMED: Readonly<Record<string, string>> = { '\n': '\\n', '\r': '\\r', '\t': '\\t' };

function escapeOne(char: string): string {
  const named = NAMED[char];
  if (named !== undefined) return named;
  const code = char.charCodeAt(0);
  return code < 0x100 ? `\\x${code.toString(16).padStart(2, '0')}` : `\\u${code.toString(16).padStart(4, '0')}`;
}

/** `text` with every control and bidi formatting character written as a visible escape. */
export function terminalText(text: string): string {
  return text.replace(UNSAFE, escapeOne);
}
