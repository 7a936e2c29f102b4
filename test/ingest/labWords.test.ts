/**
 * Lab words found inside cells: whole words, case and accents ignored, the longest call phrase
 * winning. Accent removal follows Unicode canonical decomposition (NFD: "ü" is "u" followed by
 * U+0308 COMBINING DIAERESIS, Unicode Standard Annex #15); expected readings are by hand from the
 * words configured.
 */
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DEFAULT_CALL_WORDS, DEFAULT_STATUS_WORDS } from '../../src/config/load.js';
import { LabWords } from '../../src/ingest/labWords.js';
import { WordMatcher, wordKey } from '../../src/util/words.js';

describe('wordKey', () => {
  it('drops accents, case and punctuation, keeping letters and digits as words', () => {
    // NFD of U+00FC is U+0075 U+0308; the combining mark is dropped (UAX #15).
    expect('ü'.normalize('NFD')).toBe('u\u0308');
    expect(wordKey('IK ungültig')).toBe('ik ungultig');
    expect(wordKey('  UNGÜLTIG!! ')).toBe('ungultig');
    // The precomposed and the decomposed spelling are one word.
    expect(wordKey('ungu\u0308ltig')).toBe(wordKey('ung\u00fcltig'));
    expect(wordKey('positiv (Korrektur)')).toBe('positiv korrektur');
    expect(wordKey('neg.')).toBe('neg');
    expect(wordKey('Not  detected - IC pass')).toBe('not detected ic pass');
    expect(wordKey('--')).toBe('');
  });
});

describe('WordMatcher', () => {
  const matcher = new WordMatcher<string>([
    ['fail', 'control'],
    ['not detected', 'negative'],
    ['detected', 'positive'],
  ]);
  const found = (text: string) =>
    matcher
      .find(text)
      .map((match) => `${match.value}:${match.words}`)
      .sort();

  it('finds a word only as a whole word', () => {
    expect(found('IC FAIL')).toEqual(['control:1']);
    expect(found('failsafe')).toEqual([]);
    expect(found('FAIL/retest')).toEqual(['control:1']);
  });

  it('finds phrases of several words, and the words inside them', () => {
    expect(found('Not detected')).toEqual(['negative:2', 'positive:1']);
    expect(found('not  DETECTED.')).toEqual(['negative:2', 'positive:1']);
    // The words of a phrase must be neighbours, in order.
    expect(found('detected not')).toEqual(['positive:1']);
  });

  it('refuses a phrase with no letter or digit: it could never be found', () => {
    expect(() => new WordMatcher([['--', 1]])).toThrow(RangeError);
  });
});

describe('LabWords', () => {
  const german = new LabWords({
    controlFailedTokens: ['ungültig', 'IK fehlerhaft'],
    callWords: {
      positive: ['positiv'],
      negative: ['negativ', 'nicht nachweisbar'],
      suspect: ['fraglich'],
      invalid: ['ungültig'],
    },
    statusWords: { preliminary: ['vorläufig', 'ausstehend'], final: ['endgültig'], corrected: ['Korrektur'] },
  });
  const english = new LabWords({
    controlFailedTokens: ['FAIL'],
    callWords: DEFAULT_CALL_WORDS,
    statusWords: DEFAULT_STATUS_WORDS,
  });

  it('reads a failed control written inside a longer cell, in any case and with or without accents', () => {
    for (const cell of [
      'ungültig',
      'IK ungültig',
      'IK UNGÜLTIG',
      'ik ungultig',
      'Befund: IK ungültig, bitte wiederholen',
      'IK fehlerhaft',
    ]) {
      expect(german.read(cell).controlFailed, cell).toBeDefined();
    }
    // A word that only contains the token is another word; "fehlerhaft" alone is not the phrase "IK fehlerhaft".
    for (const cell of ['Ungültigkeit geprüft', 'fehlerhaft', 'IK ok'])
      expect(german.read(cell).controlFailed, cell).toBeUndefined();
  });

  it("reads the lab's call and the state of the report from one cell", () => {
    expect(german.read('positiv (Korrektur)')).toMatchObject({
      call: 'positive',
      status: 'corrected',
      statusWord: 'Korrektur',
    });
    expect(german.read('NEGATIV')).toMatchObject({ call: 'negative', status: undefined });
    expect(german.read('nicht nachweisbar')).toMatchObject({ call: 'negative' });
    expect(german.read('ausstehend')).toMatchObject({ call: undefined, status: 'preliminary' });
    // Corrected over preliminary over final (a corrected report says so whatever else it says).
    expect(german.read('endgültig, Korrektur')).toMatchObject({ status: 'corrected' });
    expect(german.read('vorläufig endgültig')).toMatchObject({ status: 'preliminary' });
  });

  it('takes the longest call phrase, and no call when two classes tie', () => {
    // English defaults: "not detected" (2 words, negative) over "detected" (1 word, positive).
    expect(english.read('Not Detected').call).toBe('negative');
    expect(english.read('Detected').call).toBe('positive');
    expect(english.read('None detected').call).toBe('negative');
    expect(english.read('positive/negative').call).toBeUndefined();
    expect(english.read('Pending').call).toBeUndefined();
    expect(english.read('Pending').status).toBe('preliminary');
    expect(english.read('Invalid').call).toBe('invalid');
    expect(english.read('').call).toBeUndefined();
  });

  it('says the same of a cell after any run of cells as a reader that has read nothing', () => {
    // Oracle: a new reader per cell. More distinct cells than the reader keeps at hand, repeated.
    const profile = { controlFailedTokens: ['FAIL'], callWords: DEFAULT_CALL_WORDS, statusWords: DEFAULT_STATUS_WORDS };
    const cell = fc.constantFrom('Negative', 'PASS', 'Final', 'Positive', 'FAIL', 'Preliminary', 'Corrected', 'x', '');
    fc.assert(
      fc.property(fc.array(cell, { maxLength: 40 }), (cells) => {
        const reader = new LabWords(profile);
        for (const text of cells) expect(reader.read(text), text).toEqual(new LabWords(profile).read(text));
      }),
      { numRuns: 200 },
    );
  });
});
