/**
 * The comparison of a round with the one before it, on two rounds small enough to count by hand
 * (barn B1 of the small test configuration, ropes on A1 to A6).
 *
 * Round 1 (2026-08-03): A1, A2, A4 positive; A3, A5, A6 negative.
 * Round 2 (2026-08-17): A2, A3 positive; A1 negative; A4 suspect; A5 invalid; A6 hung, no result.
 * By hand: newly positive A3 (A2 was positive before); cleared A1 (A4 is suspect, not cleared);
 * invalid A5; missing the rope of A6.
 */
import { describe, expect, it } from 'vitest';
import { sinceLastRound } from '../../src/analysis/sinceLastRound.js';
import { buildSiteRounds } from '../../src/rounds/roundModel.js';
import { roundRopes, smallConfig } from './fixtures.js';

const config = smallConfig();
const site = config.sites[0]!;
const first = roundRopes('2026-08-03', 6, 'R1', [0, 1, 3]);
const second = roundRopes('2026-08-17', 6, 'R2', [1, 2]);
const secondResults = second.results
  .map((result, i) =>
    i === 3
      ? { ...result, id: 100 + i, ct: 38, resultClass: 'suspect' as const }
      : i === 4
        ? { ...result, id: 100 + i, ct: null, resultClass: 'invalid' as const }
        : { ...result, id: 100 + i },
  )
  .filter((_, i) => i !== 5);
const rounds = buildSiteRounds(site, [...first.ropes, ...second.ropes], [...first.results, ...secondResults]);

describe('sinceLastRound', () => {
  it('lists the pens newly positive, cleared, missing and invalid, counted by hand', () => {
    expect(rounds).toHaveLength(2);
    const change = sinceLastRound(rounds[0]!, rounds[1]!);
    expect(change.previous).toEqual({ number: 1, id: rounds[0]!.id });
    expect(change.newlyPositive).toEqual([{ barnId: 'B1', penId: 'A3', assayId: 'PRRSV', sampleId: 'R2-2' }]);
    expect(change.cleared).toEqual([{ barnId: 'B1', penId: 'A1', assayId: 'PRRSV', sampleId: 'R2-0' }]);
    expect(change.invalid).toEqual([{ barnId: 'B1', penId: 'A5', assayId: 'PRRSV', sampleId: 'R2-4' }]);
    expect(change.missing).toEqual([{ barnId: 'B1', penId: 'A6', sampleId: 'R2-5' }]);
  });

  it("calls nothing new or cleared in a site's first round, but still lists its missing and invalid ropes", () => {
    const change = sinceLastRound(null, rounds[0]!);
    expect(change).toEqual({
      previous: null,
      round: { number: 1, id: rounds[0]!.id },
      newlyPositive: [],
      cleared: [],
      missing: [],
      invalid: [],
    });
    expect(sinceLastRound(null, rounds[1]!).invalid.map((entry) => entry.penId)).toEqual(['A5']);
  });

  it('refuses rounds of another site or in the wrong order', () => {
    expect(() => sinceLastRound(rounds[1]!, rounds[0]!)).toThrow(/`previous` must come before round 1, got round 2/);
    expect(() => sinceLastRound({ ...rounds[0]!, siteId: 'other' }, rounds[1]!)).toThrow(
      /`previous` must be a round of site/,
    );
  });
});
