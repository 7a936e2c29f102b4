/**
 * The next round of a positive barn: monitored, not sized for detection. The barn here is like
 * the demo's finisher: 2 x 20 pens, one empty and one out of use (38 in use), design prevalence
 * 10% (4 pens), rope sensitivity 0.8, target 95%, 8 positive pens in the last round.
 */
import { describe, expect, it } from 'vitest';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { planNextRound } from '../../src/analysis/nextRound.js';
import { wordPlan } from '../../src/report/planWording.js';
import { OutbreakCache, siteSpatial } from '../../src/analysis/spatialRound.js';
import type { Config } from '../../src/config/types.js';
import { buildSiteRounds, type ResultInput, type RopeInput } from '../../src/rounds/roundModel.js';
import { imperfectDetect } from '../plan/helpers.js';
import { roundRopes, smallConfig } from './fixtures.js';
import { resultInput } from '../helpers/results.js';

const FINISHER = { rows: 2, pensPerRow: 20, empty: ['B20'], outOfUse: ['A10'] };
const PROGRAM = { designPrevalence: 0.1, ropeSensitivity: 0.8, followUpRopes: 8 };
const POSITIVE = ['A3', 'A4', 'A5', 'A6', 'A7', 'A8', 'B4', 'B6'];

/** One rope in each pen named, on one day; PRRSV positive (Ct 28) in the pens of `positive`. */
function roundIn(date: string, prefix: string, pens: readonly string[], positive: readonly string[]) {
  const ropes: RopeInput[] = pens.map((penId, i) => ({
    sampleId: `${prefix}-${i}`,
    siteId: 'test-site',
    barnId: 'B1',
    penId,
    hungOn: date,
    source: 'sheet',
  }));
  const results: ResultInput[] = ropes.map((rope, i) =>
    resultInput({
      id: i,
      sampleId: rope.sampleId,
      ct: positive.includes(rope.penId) ? 28 : null,
      resultClass: positive.includes(rope.penId) ? 'positive' : 'negative',
    }),
  );
  return { ropes, results };
}

function plan(config: Config, parts: { ropes: RopeInput[]; results: ResultInput[] }[], today: string) {
  const site = config.sites[0]!;
  const rounds = buildSiteRounds(
    site,
    parts.flatMap((part) => part.ropes),
    parts.flatMap((part) => part.results),
  );
  const confidence = siteConfidence(site, rounds);
  const cache = new OutbreakCache(config.analysis);
  const spatial = siteSpatial(site, rounds, confidence, config.analysis, cache);
  return wordPlan(planNextRound({ site, rounds, confidence, spatial, settings: config.analysis, cache, today }));
}

const ROPED = [
  'A1',
  'A2',
  'A3',
  'A4',
  'A5',
  'A6',
  'A7',
  'A8',
  'A9',
  'A11',
  'A13',
  'A15',
  'A17',
  'A19',
  'B1',
  'B2',
  'B3',
  'B4',
  'B5',
  'B6',
  'B7',
  'B9',
  'B11',
];

describe('a barn with 8 positive pens of 38', () => {
  const config = smallConfig(PROGRAM, {}, FINISHER);

  it('would be sized for detection if it were negative: 25 ropes (Cameron & Baldock 1998, imperfect rope, by the formula)', () => {
    // sum_x Hyp(x; 38, 4, n) [1 - 0.2^x]: 0.9459 at n = 24, 0.9547 at n = 25.
    expect(imperfectDetect(38, 4, 24, 0.8)).toBeLessThan(0.95);
    expect(imperfectDetect(38, 4, 25, 0.8)).toBeGreaterThanOrEqual(0.95);
    const negative = plan(config, [roundIn('2026-08-03', 'R1', ROPED, [])], '2026-08-10');
    expect(negative.barns[0]!.sizing.routineRopes).toBe(25);
    expect(negative.barns[0]!.monitoring).toBeUndefined();
  });

  it('gets a monitoring plan instead: no routine ropes, every positive pen re-roped, a fixed tracking set, reasons on each row', () => {
    const next = plan(config, [roundIn('2026-08-03', 'R1', ROPED, POSITIVE)], '2026-08-10');
    const barn = next.barns[0]!;
    expect(barn.sizing.routineRopes).toBe(0);
    expect(barn.routine).toBe(0);
    expect(next.ropes.filter((rope) => rope.reason === 'routine')).toEqual([]);
    expect(
      next.ropes
        .filter((rope) => rope.reason === 're-rope')
        .map((rope) => rope.penId)
        .sort(),
    ).toEqual([...POSITIVE].sort());
    // Default trackingRopes 4; those that fall in a re-roped or ring pen carry that reason instead.
    expect(barn.tracking).toBeGreaterThan(0);
    expect(barn.tracking).toBeLessThanOrEqual(4);
    // Follow-up at most followUpRopes (8), as for any barn.
    expect(barn.followUp).toBeLessThanOrEqual(8);
    expect(barn.ropes).toBe(barn.reRope + barn.tracking + barn.followUp + barn.retest);
    expect(barn.ropes).toBeLessThan(8 + 4 + 8 + 1);
    expect(barn.monitoring).toMatchObject({ barnId: 'B1', assays: ['PRRSV'], sinceRound: 1, negativeRoundsInARow: 0 });
    expect(barn.sizing.statement).toMatch(
      /^Barn B1 is positive for PRRSV since round 1: monitored, not sized for detection/,
    );
    expect(barn.sizing.statement).toContain('after 2 negative rounds in a row (0 so far)');
    expect(next.schedules.find((entry) => entry.barnId === 'B1')).toBeUndefined();
    expect(next.freedom).toBeNull();
    expect(next.notes.join('\n')).toContain('The site is positive for PRRSV since round 1');
  });

  it('keeps the same tracking pens round after round while the barn stays positive', () => {
    const first = plan(config, [roundIn('2026-08-03', 'R1', ROPED, POSITIVE)], '2026-08-10');
    const secondRound = roundIn(
      '2026-08-17',
      'R2',
      first.ropes.map((rope) => rope.penId),
      ['A5', 'A6'],
    );
    const second = plan(config, [roundIn('2026-08-03', 'R1', ROPED, POSITIVE), secondRound], '2026-08-24');
    const tracked = (p: typeof first) => p.ropes.filter((rope) => rope.reason === 'tracking').map((rope) => rope.penId);
    // Pens no longer re-roped or ringed fall back to tracking: the second set contains the first.
    for (const pen of tracked(first)) expect(tracked(second)).toContain(pen);
    // A6 and A5 are still positive; A3 tested negative in round 2 and is not re-roped any more.
    expect(
      second.ropes
        .filter((rope) => rope.reason === 're-rope')
        .map((rope) => rope.penId)
        .sort(),
    ).toEqual(['A5', 'A6']);
  });
});

describe('clearance in the plan', () => {
  const config = smallConfig({ designPrevalence: 0.1, ropeSensitivity: 0.9 });
  const r1 = roundRopes('2026-08-03', 18, 'R1', [4]);
  const r2 = roundRopes('2026-08-17', 18, 'R2');
  const r3 = roundRopes('2026-08-31', 18, 'R3');

  it('monitors after one negative round and surveys again after the second (clearAfterNegativeRounds 2)', () => {
    const afterOne = plan(config, [r1, r2], '2026-08-24');
    expect(afterOne.barns[0]!.monitoring).toMatchObject({ sinceRound: 1, negativeRoundsInARow: 1 });
    expect(afterOne.barns[0]!.sizing.routineRopes).toBe(0);
    const afterTwo = plan(config, [r1, r2, r3], '2026-09-07');
    expect(afterTwo.barns[0]!.monitoring).toBeUndefined();
    expect(afterTwo.barns[0]!.sizing.routineRopes).toBeGreaterThan(0);
    expect(afterTwo.ropes.some((rope) => rope.reason === 'routine')).toBe(true);
    expect(afterTwo.freedom).not.toBeNull();
  });
});
