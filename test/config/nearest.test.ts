/**
 * The Damerau-Levenshtein distance used to suggest the nearest configuration key. Checked
 * against distances worked by hand (each spelled out beside it), and against its definition:
 * the fewest single-character insertions, deletions, substitutions and swaps of two neighbours
 * (Damerau 1964), found by breadth-first search over all edit sequences on short strings.
 */
import { describe, expect, it } from 'vitest';
import { damerauLevenshtein, didYouMean, nearestNames } from '../../src/config/nearest.js';

describe('damerauLevenshtein', () => {
  it('agrees with distances worked by hand', () => {
    // By hand: nothing to do; or every character inserted.
    expect(damerauLevenshtein('', '')).toBe(0);
    expect(damerauLevenshtein('', 'abc')).toBe(3);
    expect(damerauLevenshtein('abc', '')).toBe(3);
    // By hand: one swap of neighbours (Damerau 1964's fourth error kind).
    expect(damerauLevenshtein('ab', 'ba')).toBe(1);
    expect(damerauLevenshtein('recieve', 'receive')).toBe(1);
    // By hand: one substitution, a -> e.
    expect(damerauLevenshtein('designPrevalance', 'designPrevalence')).toBe(1);
    // By hand: kitten -> sitten (k/s) -> sittin (e/i) -> sitting (+g); no shorter way, no swap helps.
    expect(damerauLevenshtein('kitten', 'sitting')).toBe(3);
    // By hand: CA -> AC (swap) -> ABC (insert B): 2. The restricted form (optimal string
    // alignment) may not edit between a swapped pair and says 3; the unrestricted form says 2.
    expect(damerauLevenshtein('CA', 'ABC')).toBe(2);
    // By hand: "a cat" -> "an cat" (+n) -> "an act" (swap c, a): 2, where Levenshtein needs 3.
    expect(damerauLevenshtein('a cat', 'an act')).toBe(2);
    // By hand: pensPerRow <- pensPerRov (one substitution), intervalDays <- intervallDays (one deletion).
    expect(damerauLevenshtein('pensPerRov', 'pensPerRow')).toBe(1);
    expect(damerauLevenshtein('intervallDays', 'intervalDays')).toBe(1);
    // By hand: code points, not UTF-16 units: one astral character is one edit.
    expect(damerauLevenshtein('a\u{1F416}', 'a')).toBe(1);
  });

  it('is the length of the shortest edit sequence, for every pair of strings of up to 3 letters over {a, b, c}', () => {
    // The definition, by breadth-first search from each string over every string of up to 5
    // letters (two longer than any end: no shortest sequence needs a longer detour).
    const alphabet = ['a', 'b', 'c'];
    const strings: string[] = [''];
    for (let length = 1; length <= 3; length++) {
      for (const prefix of strings.filter((s) => s.length === length - 1))
        for (const letter of alphabet) strings.push(prefix + letter);
    }
    const neighbours = (s: string): string[] => {
      const out: string[] = [];
      for (let i = 0; i <= s.length; i++)
        for (const letter of alphabet) if (s.length < 5) out.push(s.slice(0, i) + letter + s.slice(i));
      for (let i = 0; i < s.length; i++) {
        out.push(s.slice(0, i) + s.slice(i + 1));
        for (const letter of alphabet) if (letter !== s[i]) out.push(s.slice(0, i) + letter + s.slice(i + 1));
        if (i + 1 < s.length) out.push(s.slice(0, i) + s[i + 1] + s[i] + s.slice(i + 2));
      }
      return out;
    };
    let pairs = 0;
    for (const source of strings) {
      const distance = new Map<string, number>([[source, 0]]);
      let frontier = [source];
      while (frontier.length > 0) {
        const next: string[] = [];
        for (const s of frontier) {
          for (const t of neighbours(s)) {
            if (distance.has(t)) continue;
            distance.set(t, distance.get(s)! + 1);
            next.push(t);
          }
        }
        frontier = next;
      }
      for (const target of strings) {
        expect(damerauLevenshtein(source, target), `${source} -> ${target}`).toBe(distance.get(target));
        pairs++;
      }
    }
    expect(pairs).toBe(40 * 40);
  });
});

describe('nearestNames', () => {
  const programKeys = [
    'designPrevalence',
    'targetConfidence',
    'ropeSensitivity',
    'ropeSpecificity',
    'roundWindowDays',
    'intervalDays',
    'priorFreedom',
  ];

  it('names the key one slip away, ignoring case', () => {
    expect(nearestNames('designPrevalance', programKeys)).toEqual(['designPrevalence']);
    expect(nearestNames('DesignPrevalence', programKeys)).toEqual(['designPrevalence']);
    expect(didYouMean('designPrevalance', programKeys)).toBe('did you mean designPrevalence?');
  });

  it('names every key at the same least distance', () => {
    // By hand: "ab" is one edit from "abc" (+c), "ac" (b -> c) and "a" (-b), three from "xyz";
    // the limit is max(1, floor(2/3)) = 1.
    expect(nearestNames('ab', ['abc', 'ac', 'xyz'])).toEqual(['abc', 'ac']);
    expect(didYouMean('ab', ['abc', 'ac', 'a'])).toBe('did you mean abc, ac or a?');
  });

  it('names nothing further than a third of the word (at least one edit)', () => {
    // By hand: "seed" -> "speed" is one insertion; limit max(1, floor(4/3)) = 1.
    expect(nearestNames('seed', ['speed'])).toEqual(['speed']);
    // By hand: "rows" -> "alpha": no letters in common in place, 5 edits; limit 1.
    expect(nearestNames('rows', ['alpha'])).toEqual([]);
    // By hand: "intervalDayz" (12 letters, limit 4) is 1 from intervalDays, 11+ from the rest.
    expect(nearestNames('intervalDayz', programKeys)).toEqual(['intervalDays']);
    expect(didYouMean('zzz', programKeys)).toBe('');
  });
});
