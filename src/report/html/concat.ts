/**
 * Pieces of a page put together without copying them. `a + b` makes a string that refers to
 * both pieces (V8 keeps it as a rope until something reads its characters), while
 * `Array.prototype.join` copies every piece into a new flat string; a page built from joins
 * inside joins (pens into maps, maps into barns, barns into the page) copies its text once per
 * level. With `+` the text is copied once, when the page is written.
 */
export function concat(pieces: readonly string[]): string {
  let text = '';
  for (const piece of pieces) text += piece;
  return text;
}
