/**
 * Where a round stands (awaiting results, partial, complete) and which round a planned rope
 * belongs to. Rope sheets usually arrive before their results: a round whose results are not yet
 * due has no missing ropes. Expected values are by hand from the small inputs below on the demo
 * site hollow-creek (barn F1 rows A and B, 20 pens a row; roundWindowDays 3; the default
 * resultGraceDays, 7).
 */
import { describe, expect, it } from 'vitest';
import { DEFAULT_RESULT_GRACE_DAYS, loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { buildSiteRounds, type PlannedInput, type ResultInput } from '../../src/rounds/roundModel.js';
import { resultsDueOn, roundForDueDate, roundState } from '../../src/rounds/rounds.js';
import { resultInput, sheetRopeIn } from '../helpers/results.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const site = config.siteById.get('HOLLOW-CREEK')!;

const rope = sheetRopeIn(site.id, 'F1');
let nextId = 1;
const negative = (sampleId: string): ResultInput =>
  resultInput({
    id: nextId++,
    sampleId,
    ct: null,
    resultClass: 'negative',
  });
const planned = (sampleId: string, penId: string, dueOn: string): PlannedInput => ({
  sampleId,
  barnId: 'F1',
  penId,
  dueOn,
});

describe('resultsDueOn and roundState', () => {
  it('gives the results a grace period after the last rope date, then judges the round closed', () => {
    // By hand: 2026-11-30 + 7 days = 2026-12-07 (calendar arithmetic, no source needed).
    expect(resultsDueOn('2026-11-30', 7)).toBe('2026-12-07');
    expect(resultsDueOn('2026-12-28', 7)).toBe('2027-01-04');
    expect(DEFAULT_RESULT_GRACE_DAYS).toBe(7);
    // By hand from the definitions: none back before the due date, some back, all back, past due.
    expect(roundState(16, 0, '2026-12-07', '2026-12-01')).toBe('awaiting-results');
    expect(roundState(16, 0, '2026-12-07', '2026-12-07')).toBe('awaiting-results');
    expect(roundState(16, 5, '2026-12-07', '2026-12-03')).toBe('partial');
    expect(roundState(16, 16, '2026-12-07', '2026-12-02')).toBe('complete');
    expect(roundState(16, 0, '2026-12-07', '2026-12-08')).toBe('complete');
    expect(roundState(16, 0, '2026-12-07', undefined)).toBe('complete');
  });

  it('refuses counts that cannot be', () => {
    expect(() => roundState(3, 4, '2026-12-07', '2026-12-01')).toThrow(
      '`returned` must be an integer in [0, 3], got 4',
    );
    expect(() => resultsDueOn('2026-12-01', -1)).toThrow('`graceDays` must be a non-negative integer, got -1');
  });
});

describe('a rope sheet dated today, before its results', () => {
  // Round 1 came back in full; round 2's sheet (16 ropes) arrives on the day they were hung.
  const earlier = ['S1', 'S2'].map((id, index) => rope(id, `A${index + 1}`, '2026-11-16'));
  const today = Array.from({ length: 16 }, (_, index) => rope(`T${index + 1}`, `A${index + 1}`, '2026-12-01'));
  const results = earlier.map((entry) => negative(entry.sampleId));

  it('is a round awaiting results, with no missing rope', () => {
    const rounds = buildSiteRounds(site, [...earlier, ...today], results, [], {}, '2026-12-01');
    expect(rounds.map((round) => round.state)).toEqual(['complete', 'awaiting-results']);
    const f1 = rounds[1]!.barns.find((barn) => barn.barnId === 'F1')!;
    // By hand: 16 ropes hung today, none back, results due 2026-12-01 + 7 = 2026-12-08.
    expect(rounds[1]!.resultsDueOn).toBe('2026-12-08');
    expect(f1.missingSampleIds).toEqual([]);
    expect(f1.awaitingSampleIds).toHaveLength(16);
    expect(f1).toMatchObject({ ropesHung: 16, ropesReturned: 0 });
  });

  it('has its ropes missing once the grace period has passed', () => {
    const rounds = buildSiteRounds(site, [...earlier, ...today], results, [], {}, '2026-12-09');
    expect(rounds[1]!.state).toBe('complete');
    const f1 = rounds[1]!.barns.find((barn) => barn.barnId === 'F1')!;
    expect(f1.missingSampleIds).toHaveLength(16);
    expect(f1.awaitingSampleIds).toEqual([]);
  });

  it('is partial while some results are back and the rest not yet due', () => {
    const rounds = buildSiteRounds(
      site,
      [...earlier, ...today],
      [...results, negative('T1'), negative('T2')],
      [],
      {},
      '2026-12-03',
    );
    expect(rounds[1]!.state).toBe('partial');
    const f1 = rounds[1]!.barns.find((barn) => barn.barnId === 'F1')!;
    expect(f1).toMatchObject({ ropesHung: 16, ropesReturned: 2, missingSampleIds: [] });
    expect(f1.awaitingSampleIds).toHaveLength(14);
  });
});

describe('planned ropes join a round by due date, not by round number', () => {
  // Rounds on 2026-10-05, 2026-10-19 (a sheet that came late) and 2026-11-02, all back.
  const ropes = [rope('O1', 'A1', '2026-10-05'), rope('O2', 'A2', '2026-10-19'), rope('N1', 'A3', '2026-11-02')];
  const results = ropes.map((entry) => negative(entry.sampleId));

  it('leaves a December plan out of the November round', () => {
    // Made in December after the November round, when it was round 2: never issued, never missing.
    const rounds = buildSiteRounds(
      site,
      ropes,
      results,
      [planned('D1', 'B1', '2026-11-16'), planned('D2', 'B2', '2026-11-16')],
      {},
      '2026-12-01',
    );
    expect(rounds.map((round) => round.startOn)).toEqual(['2026-10-05', '2026-10-19', '2026-11-02']);
    expect(rounds.flatMap((round) => round.barns.flatMap((barn) => barn.missingSampleIds))).toEqual([]);
    expect(rounds[2]!.barns.find((barn) => barn.barnId === 'F1')!.ropesHung).toBe(1);
  });

  it('counts a rope planned for the November round there, missing and among the ropes on sheets or plans', () => {
    const rounds = buildSiteRounds(site, ropes, results, [planned('P1', 'B1', '2026-11-02')], {}, '2026-12-01');
    const f1 = rounds[2]!.barns.find((barn) => barn.barnId === 'F1')!;
    expect(f1.missingSampleIds).toEqual(['P1']);
    // By hand: N1 back, P1 not: 2 ropes on the sheet and the plan, returned + missing.
    expect(f1).toMatchObject({ ropesHung: 2, ropesReturned: 1, plannedMissing: ['P1'] });
    expect(rounds[0]!.barns.flatMap((barn) => barn.missingSampleIds)).toEqual([]);
  });

  it('finds the round a rope hung on the due date would have joined, else none', () => {
    const windows = [
      { startOn: '2026-10-05', endOn: '2026-10-06' },
      { startOn: '2026-11-02', endOn: '2026-11-03' },
    ];
    // By hand with a 3-day window: 2026-11-01 to 2026-11-03 spans 2 days (joins round 2);
    // 2026-10-31 to 2026-11-03 spans 3 (opens a round of its own).
    expect(roundForDueDate('2026-11-01', windows, 3)).toBe(1);
    expect(roundForDueDate('2026-10-31', windows, 3)).toBe(-1);
    expect(roundForDueDate('2026-10-07', windows, 3)).toBe(0);
    expect(roundForDueDate('2026-12-14', windows, 3)).toBe(-1);
  });
});
