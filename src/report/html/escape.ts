/**
 * Escaping for text that goes into HTML and SVG. Every value from config, lab files or the
 * store passes through here before it reaches a page: a pen, barn or site name may hold `<`, `&`
 * or quotes, and a page must show them as text, never as markup.
 */

const ENTITIES: Readonly<Record<string, string>> = {
  '&': '&amp;',
  '<': '&lt;',
  '>': '&gt;',
  '"': '&quot;',
  "'": '&#39;',
};

const SPECIAL = /[&<>"']/;
const SPECIALS = /[&<>"']/g;

/**
 * Escapes text for an HTML/SVG text node or a double- or single-quoted attribute value.
 * Escaping `&` first is implicit in the single pass: each character is replaced once.
 * @param value any text; numbers are converted with String()
 * @returns the text with & < > " ' replaced by entities
 * @see WHATWG HTML Living Standard, section 13.1 (character references); W3C XML 1.0 section 2.4 (for SVG).
 */
export function escapeHtml(value: string | number): string {
  const text = String(value);
  // Most text (pen ids, numbers, dates) has nothing to escape: one test, no replacement pass.
  return SPECIAL.test(text) ? text.replace(SPECIALS, (char) => ENTITIES[char]!) : text;
}

/**
 * A fragment identifier / id safe for HTML and SVG (letters, digits, hyphen, underscore), kept
 * distinct for distinct inputs by hex-encoding every other character.
 * @param value any text, e.g. "F1/PRRSV"
 * @see WHATWG HTML Living Standard, the id attribute (any non-space string; we restrict further for url(#id) references).
 */
export function safeId(value: string): string {
  return value.replace(/[^A-Za-z0-9_-]/g, (char) => `_${char.codePointAt(0)!.toString(16)}_`);
}
