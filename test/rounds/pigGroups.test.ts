/**
 * Which group a day belongs to in an all-in/all-out barn (filled and emptied as one group: common
 * practice, no source). Cases derived by hand from the dates.
 */
import { describe, expect, it } from 'vitest';
import type { BarnGroup } from '../../src/config/types.js';
import { barnStatusOn, groupProblems, inPlacementOrder, isEmptyOn } from '../../src/rounds/pigGroups.js';

const g1: BarnGroup = { id: 'G1', label: 'G1', placedOn: '2026-01-05', closedOn: '2026-04-20' };
const g2: BarnGroup = { id: 'G2', label: 'G2', placedOn: '2026-05-04', closedOn: null };

describe('the group of a barn on a day', () => {
  it('counts the placement and close-out days inside the group, the days between as empty', () => {
    // By hand: 05 Jan to 20 Apr is G1, 21 Apr to 03 May nobody, from 04 May G2.
    expect(barnStatusOn([g1, g2], '2026-01-05')).toEqual({ kind: 'group', group: g1 });
    expect(barnStatusOn([g1, g2], '2026-04-20')).toEqual({ kind: 'group', group: g1 });
    expect(barnStatusOn([g1, g2], '2026-04-21')).toEqual({ kind: 'empty', closed: g1, next: g2 });
    expect(isEmptyOn([g1, g2], '2026-05-03')).toBe(true);
    expect(barnStatusOn([g1, g2], '2026-05-04')).toEqual({ kind: 'group', group: g2 });
    expect(barnStatusOn([g1, g2], '2027-01-01')).toEqual({ kind: 'group', group: g2 });
  });

  it('takes groups in any order once put in placement order, and says nothing of the days before the first placement', () => {
    expect(barnStatusOn(inPlacementOrder([g2, g1]), '2026-02-01')).toEqual({ kind: 'group', group: g1 });
    expect(barnStatusOn([g1, g2], '2025-12-31')).toEqual({ kind: 'ungrouped' });
    expect(barnStatusOn([], '2026-02-01')).toEqual({ kind: 'ungrouped' });
  });

  it('calls a barn empty after the last close-out with no next group', () => {
    expect(barnStatusOn([g1], '2026-06-01')).toEqual({ kind: 'empty', closed: g1, next: null });
  });
});

describe('checks of a barn\u2019s groups', () => {
  it('finds no problem in groups that follow each other', () => {
    expect(groupProblems([g1, g2])).toEqual([]);
  });

  it('names an overlap at the later placement, by its index as configured', () => {
    const late = { ...g2, placedOn: '2026-04-20' };
    expect(groupProblems([late, g1])).toEqual([expect.objectContaining({ index: 0, key: 'placedOn' })]);
  });

  it('names a close-out before placement and an open group before another', () => {
    expect(groupProblems([{ ...g1, closedOn: '2026-01-04' }])).toEqual([
      expect.objectContaining({ index: 0, key: 'closedOn' }),
    ]);
    expect(groupProblems([{ ...g1, closedOn: null }, g2])).toEqual([
      expect.objectContaining({ index: 0, key: 'closedOn' }),
    ]);
  });

  it('allows a group of one day (placed and closed out the same day)', () => {
    expect(groupProblems([{ ...g1, closedOn: g1.placedOn }])).toEqual([]);
  });
});
