/**
 * Words inside a cell: labs write their calls, control results and report states inside longer
 * text ("IK ungültig", "positiv (Korrektur)", "Not detected - IC pass"), in any case and with or
 * without accents. A configured word matches when it appears as whole words in the cell, so
 * "fail" finds "IC FAIL" but not "failsafe". Kept free of configuration and schema code: the
 * ingest's parse worker loads it.
 */

/**
 * A text reduced to its words: accents removed (Unicode canonical decomposition, NFD, then the
 * combining marks dropped: "ungültig" is "ungultig"), lower case, and every run of characters
 * that are neither letters nor digits one space ("neg." is "neg", "n/a" is "n a").
 * @see The Unicode Standard, Annex #15 (Unicode Normalization Forms), canonical decomposition.
 */
export function wordKey(text: string): string {
  return text
    .normalize('NFD')
    .replace(/\p{M}+/gu, '')
    .toLowerCase()
    .replace(/[^\p{L}\p{N}]+/gu, ' ')
    .trim();
}

/** One configured phrase found in a text. */
export interface WordMatch<V> {
  value: V;
  /** The phrase as configured (for messages). */
  phrase: string;
  /** How many words the phrase has: a longer phrase is the more specific reading ("not detected" over "detected"). */
  words: number;
}

/**
 * Finds configured phrases as whole words inside texts. Built once per lab profile; `find` makes
 * no closure and, for one-word phrases, costs one map look-up per word of the text.
 */
export class WordMatcher<V> {
  private readonly single = new Map<string, WordMatch<V>[]>();
  private readonly multi: { key: string; match: WordMatch<V> }[] = [];

  /** @throws RangeError when a phrase has no letter or digit (it could never be found). */
  constructor(entries: Iterable<readonly [phrase: string, value: V]>) {
    for (const [phrase, value] of entries) {
      const key = wordKey(phrase);
      if (key === '') throw new RangeError(`\`phrase\` must hold a letter or a digit, got ${JSON.stringify(phrase)}`);
      const words = key.split(' ').length;
      const match: WordMatch<V> = { value, phrase, words };
      if (words === 1) {
        const list = this.single.get(key);
        if (list) list.push(match);
        else this.single.set(key, [match]);
      } else {
        this.multi.push({ key: ` ${key} `, match });
      }
    }
  }

  /** Every configured phrase that `text` holds as whole words (in no particular order). */
  find(text: string): WordMatch<V>[] {
    const key = wordKey(text);
    const found: WordMatch<V>[] = [];
    if (key === '') return found;
    for (const word of key.split(' ')) {
      const list = this.single.get(word);
      if (list !== undefined) for (const match of list) found.push(match);
    }
    if (this.multi.length > 0) {
      const padded = ` ${key} `;
      for (const entry of this.multi) if (padded.includes(entry.key)) found.push(entry.match);
    }
    return found;
  }
}
