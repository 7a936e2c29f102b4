/**
 * Which rounds a build reads again from the change log (src/rounds/roundHorizon.ts). The rule
 * checked against is the one formRounds is built on (a round opens on its first rope whatever came
 * before): a change on a day leaves the rounds that started before the round holding that day
 * alone. The histories are invented for the test.
 */
import { describe, expect, it } from 'vitest';
import { firstRoundChanged, ropeHorizon, type BuiltHistory } from '../../src/rounds/roundHorizon.js';
import { sharedInputsDigest } from '../../src/rounds/roundInputKeys.js';

const SETTINGS = 'config digest\nround files 1';
const starts = ['2026-01-05', '2026-01-19', '2026-02-02', '2026-02-16'];
const history: BuiltHistory = {
  siteVersion: 7,
  shared: sharedInputsDigest(SETTINGS, []),
  rounds: starts.map((startOn, index) => ({
    id: `r0${index + 1}-${startOn}`,
    startOn,
    endOn: startOn,
    ropes: `ropes ${index}`,
  })),
};
const head = (version: number) => ({ version, mistyped: [] });
const logged = (commits: number, fromDay: string | null) => ({ commits, fromDay });

describe('the first round a build reads again', () => {
  it('is the round holding the earliest day the log names since the build', () => {
    expect(firstRoundChanged(history, head(8), SETTINGS, logged(1, '2026-02-03'))).toBe(2);
    // A day a round starts on is that round's.
    expect(firstRoundChanged(history, head(8), SETTINGS, logged(1, '2026-01-19'))).toBe(1);
    // A day after the last round's start: the last round (a late rope of it, or the next round's first).
    expect(firstRoundChanged(history, head(9), SETTINGS, logged(2, '2026-03-30'))).toBe(3);
  });

  it('is the last round when the log names no day (a plan result only, or nothing)', () => {
    expect(firstRoundChanged(history, head(8), SETTINGS, logged(1, null))).toBe(3);
    expect(firstRoundChanged(history, head(7), SETTINGS, logged(0, null))).toBe(3);
  });

  it('is none (every rope read) when the log cannot bound the change', () => {
    // In the first round or before it: nothing is left to keep.
    expect(firstRoundChanged(history, head(8), SETTINGS, logged(1, '2026-01-10'))).toBeUndefined();
    expect(firstRoundChanged(history, head(8), SETTINGS, logged(1, '2025-12-01'))).toBeUndefined();
    // Versions committed before the log (or copied without it): fewer rows than versions.
    expect(firstRoundChanged(history, head(9), SETTINGS, logged(1, '2026-02-20'))).toBeUndefined();
    // The outputs show a state the store is behind of (a store put back from a copy).
    expect(firstRoundChanged(history, head(6), SETTINGS, logged(0, null))).toBeUndefined();
    // Other settings, or another refusal under a mistyped ID: every key changes.
    expect(firstRoundChanged(history, head(8), 'other', logged(1, '2026-02-20'))).toBeUndefined();
    const refusal = { written: 'HC-01X', suggestedId: 'HC-011', fileName: 'lab.csv', line: 4 };
    expect(
      firstRoundChanged(history, { version: 8, mistyped: [refusal] }, SETTINGS, logged(1, '2026-02-20')),
    ).toBeUndefined();
    // One round only.
    expect(
      firstRoundChanged({ ...history, rounds: history.rounds.slice(0, 1) }, head(8), SETTINGS, logged(1, null)),
    ).toBeUndefined();
  });

  it('reads the ropes from the first day of that round, and asks the log from the version built', () => {
    const asked: number[] = [];
    const horizon = ropeHorizon(history, SETTINGS);
    const from = horizon({ ...head(8), planned: [], plannedWithoutResults: [], plannedPlaced: [] }, (version) => {
      asked.push(version);
      return logged(1, '2026-02-20');
    });
    expect(from).toBe('2026-02-16');
    expect(asked).toEqual([7]);
    expect(
      ropeHorizon(undefined, SETTINGS)({ ...head(8), planned: [], plannedWithoutResults: [], plannedPlaced: [] }, () =>
        logged(1, null),
      ),
    ).toBeUndefined();
  });
});
