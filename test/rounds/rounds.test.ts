/**
 * Rounds: ropes of one site within `windowDays` of the round's first rope form one round,
 * numbered in date order (src/rounds/rounds.ts). Expected groupings are worked by hand from
 * the dates; the window is a program setting (common practice, no source).
 */
import { describe, expect, it } from 'vitest';
import { daysBetween, formRounds, roundFolderName, type DatedRope } from '../../src/rounds/rounds.js';

const rope = (sampleId: string, hungOn: string, siteId = 's'): DatedRope => ({
  sampleId,
  siteId,
  barnId: 'B',
  penId: 'P',
  hungOn,
});

describe('formRounds', () => {
  it('groups ropes within the window of the first rope into one round and opens the next at the window', () => {
    // By hand, window 3: 08-03, 08-04, 08-05 are 0, 1, 2 days after 08-03; 08-06 is 3 days after: a new round.
    const rounds = formRounds(
      's',
      [rope('d', '2026-08-06'), rope('a', '2026-08-03'), rope('c', '2026-08-05'), rope('b', '2026-08-04')],
      3,
    );
    expect(rounds.map((round) => round.ropes.map((r) => r.sampleId))).toEqual([['a', 'b', 'c'], ['d']]);
    expect(rounds.map((round) => round.id)).toEqual(['r01-2026-08-03', 'r02-2026-08-06']);
    expect(rounds[0]).toMatchObject({ number: 1, startOn: '2026-08-03', endOn: '2026-08-05' });
  });

  it('anchors the window on the round’s first rope, so ropes every two days do not chain into one long round', () => {
    // By hand, window 3: 08-07 is 4 days after the round's first rope (08-03), though only 2 after 08-05.
    const rounds = formRounds(
      's',
      [rope('a', '2026-08-03'), rope('b', '2026-08-05'), rope('c', '2026-08-07'), rope('d', '2026-08-09')],
      3,
    );
    expect(rounds.map((round) => round.ropes.map((r) => r.sampleId))).toEqual([
      ['a', 'b'],
      ['c', 'd'],
    ]);
  });

  it('renumbers the rounds when a late sheet brings an earlier date', () => {
    const base = [rope('a', '2026-08-03'), rope('b', '2026-08-17')];
    expect(formRounds('s', base, 3).map((round) => round.id)).toEqual(['r01-2026-08-03', 'r02-2026-08-17']);
    const withLate = formRounds('s', [...base, rope('z', '2026-07-20')], 3);
    expect(withLate.map((round) => round.id)).toEqual(['r01-2026-07-20', 'r02-2026-08-03', 'r03-2026-08-17']);
  });

  it('orders ropes of one day by sample ID, so the grouping does not depend on input order', () => {
    const one = formRounds('s', [rope('b', '2026-08-03'), rope('a', '2026-08-03')], 3);
    const two = formRounds('s', [rope('a', '2026-08-03'), rope('b', '2026-08-03')], 3);
    expect(one).toEqual(two);
    expect(formRounds('s', [], 3)).toEqual([]);
  });

  it('refuses ropes of another site and a window that is not a positive whole number of days', () => {
    expect(() => formRounds('s', [rope('a', '2026-08-03', 'other')], 3)).toThrow(RangeError);
    for (const bad of [0, -1, 2.5, Number.NaN]) expect(() => formRounds('s', [], bad), String(bad)).toThrow(RangeError);
  });

  it('names round folders with a two-digit number and the first day, and counts calendar days', () => {
    expect(roundFolderName(3, '2026-08-31')).toBe('r03-2026-08-31');
    expect(roundFolderName(112, '2030-01-01')).toBe('r112-2030-01-01');
    // By hand: 2026-02-27 to 2026-03-02 is 3 days (2026 is not a leap year).
    expect(daysBetween('2026-02-27', '2026-03-02')).toBe(3);
  });
});
