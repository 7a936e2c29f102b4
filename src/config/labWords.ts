/** A lab's call, control-failure and report-state words, with the English defaults. */
import { wordKey } from '../util/words.js';
import type { RawLabProfile } from './labProfileSchema.js';
import type { ProblemList } from './problems.js';
import type { CallClass, LabProfile, ReportStatusKind } from './types.js';

/** English call words, used for each class a lab profile does not list (common practice, no source). */
export const DEFAULT_CALL_WORDS: Readonly<Record<CallClass, readonly string[]>> = {
  positive: ['positive', 'pos', 'detected'],
  suspect: ['suspect', 'inconclusive', 'equivocal', 'indeterminate'],
  negative: ['negative', 'neg', 'not detected', 'none detected'],
  invalid: ['invalid'],
};

/** English report-state words, used for each state a lab profile does not list (common practice, no source). */
export const DEFAULT_STATUS_WORDS: Readonly<Record<ReportStatusKind, readonly string[]>> = {
  preliminary: ['preliminary', 'pending', 'interim', 'partial'],
  final: ['final'],
  corrected: ['corrected', 'amended', 'revised', 'reissued'],
};

/**
 * The lab's call, control and status words, checked so that no word can mean two things: the
 * same words (as matched: case, accents and punctuation ignored) under two call classes, two
 * report states, a call and a state, or a control failure and any call but invalid, are refused
 * at the second, naming where each comes from.
 */
export function labWords(
  raw: RawLabProfile,
  file: string,
  problems: ProblemList,
): Pick<LabProfile, 'controlFailedTokens' | 'callWords' | 'statusWords' | 'statusColumns'> {
  const callWords = {} as Record<CallClass, readonly string[]>;
  for (const cls of ['positive', 'suspect', 'negative', 'invalid'] as const)
    callWords[cls] = raw.callWords?.[cls] ?? DEFAULT_CALL_WORDS[cls];
  const statusWords = {} as Record<ReportStatusKind, readonly string[]>;
  for (const kind of ['preliminary', 'final', 'corrected'] as const)
    statusWords[kind] = raw.statusWords?.[kind] ?? DEFAULT_STATUS_WORDS[kind];
  statusWords.corrected = [...new Set([...statusWords.corrected, ...raw.reissueTokens])];

  /** What a word means, and where it was configured (or that it is an English default). */
  type Meaning = { what: string; where: string };
  const seen = new Map<string, Meaning>();
  const claim = (word: string, what: string, where: string, compatible: (other: string) => boolean) => {
    const key = wordKey(word);
    if (key === '') {
      problems.add(file, where, `${JSON.stringify(word)} has no letter or digit, so it can never be found in a cell`);
      return;
    }
    const earlier = seen.get(key);
    if (earlier === undefined) {
      seen.set(key, { what, where });
    } else if (earlier.what !== what && !compatible(earlier.what)) {
      problems.add(
        file,
        where,
        `${JSON.stringify(word)} would mean ${what}, but the same word (case, accents and punctuation ignored) means ${earlier.what} at ${earlier.where}; give each word one meaning`,
      );
    }
  };
  const origin = (key: string, index: number, given: boolean, word: string) =>
    given ? `${key}[${index}]` : `${key} (English default ${JSON.stringify(word)})`;
  raw.controlFailedTokens.forEach((word, index) =>
    claim(word, 'a failed control', `controlFailedTokens[${index}]`, (other) => other === 'call invalid'),
  );
  for (const cls of ['positive', 'suspect', 'negative', 'invalid'] as const) {
    const given = raw.callWords?.[cls] !== undefined;
    callWords[cls].forEach((word, index) =>
      claim(
        word,
        `call ${cls}`,
        origin(`callWords.${cls}`, index, given, word),
        (other) => cls === 'invalid' && other === 'a failed control',
      ),
    );
  }
  for (const kind of ['preliminary', 'final', 'corrected'] as const) {
    const given = raw.statusWords?.[kind] !== undefined;
    const listed = raw.statusWords?.[kind] ?? DEFAULT_STATUS_WORDS[kind];
    statusWords[kind].forEach((word, index) => {
      const where =
        index < listed.length
          ? origin(`statusWords.${kind}`, index, given, word)
          : `reissueTokens[${raw.reissueTokens.indexOf(word)}]`;
      claim(word, `a ${kind} report`, where, () => false);
    });
  }
  const statusColumns =
    raw.statusColumns ??
    [raw.columns.reportStatus, raw.columns.call].filter((column): column is string => column !== undefined);
  return {
    controlFailedTokens: raw.controlFailedTokens.map((word) => word.trim()),
    callWords: Object.freeze(callWords),
    statusWords: Object.freeze(statusWords),
    statusColumns,
  };
}
