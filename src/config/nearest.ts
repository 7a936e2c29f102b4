/**
 * The nearest known name to a misspelt one, for configuration messages ("did you mean
 * designPrevalence?").
 *
 * The distance is the Damerau-Levenshtein distance: the fewest insertions, deletions,
 * substitutions and transpositions of two adjacent characters that turn one string into the
 * other (Damerau 1964), in its unrestricted form, where a transposed pair may be edited again,
 * computed by the algorithm of Lowrance & Wagner (1975, "An extension of the string-to-string
 * correction problem", JACM 22(2)). The restricted form ("optimal string alignment") would say
 * 3 for CA -> ABC, where CA -> AC -> ABC takes 2.
 */

/** The unrestricted Damerau-Levenshtein distance between `a` and `b`, by code point. */
export function damerauLevenshtein(a: string, b: string): number {
  const s = Array.from(a);
  const t = Array.from(b);
  const m = s.length;
  const n = t.length;
  if (m === 0) return n;
  if (n === 0) return m;
  const infinity = m + n;
  // d[i + 1][j + 1] is the distance between the first i characters of s and the first j of t;
  // row and column 0 hold the sentinel the transposition step reaches back to.
  const width = n + 2;
  const d = new Array<number>((m + 2) * width).fill(0);
  const at = (i: number, j: number) => i * width + j;
  d[at(0, 0)] = infinity;
  for (let i = 0; i <= m; i++) {
    d[at(i + 1, 0)] = infinity;
    d[at(i + 1, 1)] = i;
  }
  for (let j = 0; j <= n; j++) {
    d[at(0, j + 1)] = infinity;
    d[at(1, j + 1)] = j;
  }
  /** The last row (1-based) of s in which each character occurred. */
  const lastRow = new Map<string, number>();
  for (let i = 1; i <= m; i++) {
    let lastMatchColumn = 0;
    for (let j = 1; j <= n; j++) {
      const k = lastRow.get(t[j - 1]!) ?? 0;
      const l = lastMatchColumn;
      let cost = 1;
      if (s[i - 1] === t[j - 1]) {
        cost = 0;
        lastMatchColumn = j;
      }
      d[at(i + 1, j + 1)] = Math.min(
        d[at(i, j)]! + cost,
        d[at(i + 1, j)]! + 1,
        d[at(i, j + 1)]! + 1,
        d[at(k, l)]! + (i - k - 1) + 1 + (j - l - 1),
      );
    }
    lastRow.set(s[i - 1]!, i);
  }
  return d[at(m + 1, n + 1)]!;
}

/**
 * The known names nearest to `name` (case ignored), when near enough to be a slip: at most a
 * third of the name's length, and at least one edit (common practice, no source: further than
 * that, a suggestion is more often wrong than helpful). Ties are all returned, in the order given.
 */
export function nearestNames(name: string, known: Iterable<string>): string[] {
  const folded = name.toLowerCase();
  const limit = Math.max(1, Math.floor(Array.from(name).length / 3));
  let best = Infinity;
  let found: string[] = [];
  for (const candidate of known) {
    if (candidate === name) continue;
    const distance = damerauLevenshtein(folded, candidate.toLowerCase());
    if (distance > limit || distance > best) continue;
    if (distance < best) {
      best = distance;
      found = [];
    }
    found.push(candidate);
  }
  return found;
}

/** "did you mean x?", "did you mean x or y?", or "" when nothing is near. */
export function didYouMean(
  name: string,
  known: Iterable<string>,
  quote: (text: string) => string = (text) => text,
): string {
  const near = nearestNames(name, known);
  if (near.length === 0) return '';
  const listed = near.map(quote);
  const words = listed.length === 1 ? listed[0]! : `${listed.slice(0, -1).join(', ')} or ${listed[listed.length - 1]!}`;
  return `did you mean ${words}?`;
}
