/**
 * A round awaiting its results is no evidence yet: no detection figure, and it stays out of the
 * probability of freedom (Martin, Cameron & Greiner 2007, method 6) until results come back or
 * its grace period ends. Values by hand on the small site of fixtures.ts (36 pens, one infected
 * pen, Se = 1, prior 0.5, introduction 0.01 per 14-day interval).
 */
import { describe, expect, it } from 'vitest';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { buildSiteRounds } from '../../src/rounds/roundModel.js';
import { expectClose } from '../helpers/expectClose.js';
import { roundRopes, smallConfig } from './fixtures.js';

describe('a round awaiting its results', () => {
  const site = smallConfig({ resultGraceDays: 30 }).sites[0]!;
  const r1 = roundRopes('2026-08-03', 18, 'A');
  const r2 = roundRopes('2026-08-17', 18, 'B');
  const r3 = roundRopes('2026-08-31', 18, 'C');
  const ropes = [...r1.ropes, ...r2.ropes, ...r3.ropes];
  const results = [...r1.results, ...r3.results];

  it('has no detection figure and is skipped by the freedom chain while its results are not due', () => {
    // Round 2's results are due 2026-08-17 + 30 = 2026-09-16; on 2026-09-01 they are awaited.
    const rounds = buildSiteRounds(site, ropes, results, [], {}, '2026-09-01');
    expect(rounds.map((round) => round.state)).toEqual(['complete', 'awaiting-results', 'complete']);
    const confidence = siteConfidence(site, rounds);
    expect(confidence[1]).toMatchObject({ barns: [], sites: [] });
    const third = confidence[2]!.sites[0]!;
    // By hand: round 1 gives 0.5 / (1 - 0.5 * 0.5) = 2/3; 28 days to round 3 are two intervals,
    // prior 2/3 * 0.99^2; SSe = 18/36 = 0.5; posterior = prior / (1 - 0.5 * (1 - prior)).
    const prior = (2 / 3) * 0.99 ** 2;
    expect(third.daysSincePrevious).toBe(28);
    expectClose(third.priorFreedom, prior, { rel: 1e-12 }, 'prior of round 3 over the awaited round');
    expectClose(third.freedom ?? Number.NaN, prior / (1 - 0.5 * (1 - prior)), { rel: 1e-12 }, 'posterior of round 3');
  });

  it('counts as a round with every rope missing once the grace period is over', () => {
    const rounds = buildSiteRounds(site, ropes, results, [], {}, '2026-09-17');
    expect(rounds[1]!.state).toBe('complete');
    const second = siteConfidence(site, rounds)[1]!.sites[0]!;
    // By hand: nothing tested, SSe 0; the prior 2/3 * 0.99 passes through unchanged.
    expect(second.detectionConfidence).toBe(0);
    expectClose(second.freedom ?? Number.NaN, (2 / 3) * 0.99, { rel: 1e-12 }, 'posterior of a round with no result');
  });
});
