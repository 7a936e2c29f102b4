/**
 * HL7 v2 escape sequences (HL7 Version 2.5.1, chapter 2 "Control", 2.7 "Use of escape sequences
 * in text fields"): inside a field the escape character (MSH-2's third, usually `\`) opens a
 * sequence that the same character closes. `\F\` field, `\S\` component, `\T\` sub-component,
 * `\R\` repetition and `\E\` escape separators stand for the character itself; `\Xhh..\` is
 * hexadecimal data; `\.br\` a line break. Other sequences (highlighting `\H\` `\N\`, character
 * set switches, formatting commands) carry no text ropewatch reads and are dropped.
 */

/** The five separators of one message: MSH-1 and the four characters of MSH-2. */
export interface EncodingCharacters {
  field: string;
  component: string;
  repetition: string;
  escape: string;
  subComponent: string;
}

/** The encoding characters HL7 recommends (and almost every sender uses): `|^~\&`. */
export const DEFAULT_ENCODING: EncodingCharacters = Object.freeze({
  field: '|',
  component: '^',
  repetition: '~',
  escape: '\\',
  subComponent: '&',
});

/** Replaces every escape sequence of `text` by the text it stands for. */
export function unescapeText(text: string, enc: EncodingCharacters): string {
  const esc = enc.escape;
  if (esc === '' || !text.includes(esc)) return text;
  let out = '';
  let at = 0;
  while (at < text.length) {
    const open = text.indexOf(esc, at);
    if (open === -1) break;
    const close = text.indexOf(esc, open + 1);
    // An escape character never closed is kept as written: nothing after it can be trusted as a sequence.
    if (close === -1) break;
    out += text.slice(at, open);
    out += sequenceText(text.slice(open + 1, close), enc);
    at = close + 1;
  }
  return out + text.slice(at);
}

function sequenceText(body: string, enc: EncodingCharacters): string {
  switch (body) {
    case 'F':
      return enc.field;
    case 'S':
      return enc.component;
    case 'T':
      return enc.subComponent;
    case 'R':
      return enc.repetition;
    case 'E':
      return enc.escape;
    case '.br':
      return '\n';
    default:
      break;
  }
  if (/^X(?:[0-9A-Fa-f]{2})+$/.test(body)) return Buffer.from(body.slice(1), 'hex').toString('latin1');
  // Highlighting, character-set and formatting sequences: no text of their own.
  return '';
}

/** Writes `text` so that none of its characters is read as a separator (the inverse of unescapeText for plain text). */
export function escapeText(text: string, enc: EncodingCharacters): string {
  let out = '';
  for (const char of text) {
    if (char === enc.escape) out += `${enc.escape}E${enc.escape}`;
    else if (char === enc.field) out += `${enc.escape}F${enc.escape}`;
    else if (char === enc.component) out += `${enc.escape}S${enc.escape}`;
    else if (char === enc.subComponent) out += `${enc.escape}T${enc.escape}`;
    else if (char === enc.repetition) out += `${enc.escape}R${enc.escape}`;
    else if (char === '\r' || char === '\n') out += `${enc.escape}.br${enc.escape}`;
    else out += char;
  }
  return out;
}
