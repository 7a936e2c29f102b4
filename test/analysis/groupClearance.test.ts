/**
 * A new group of pigs ends a positive barn's positive state (all-in/all-out: the infected pigs
 * have left; common practice, no source), however few negative rounds came before it.
 */
import { describe, expect, it } from 'vitest';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { buildSiteRounds } from '../../src/rounds/roundModel.js';
import { roundRopes } from './fixtures.js';
import { G1, G2, siteWith } from './groupScenario.js';

function positiveThenRestocked(groups: (typeof G1)[]) {
  const base = siteWith(groups);
  // Five negative rounds in a row would be needed without a new group.
  const site = { ...base, program: { ...base.program, clearAfterNegativeRounds: 5 } };
  const inBarn = (date: string, prefix: string, barnId: string, positive: number[] = []) => {
    const { ropes, results } = roundRopes(date, 18, `${prefix}${barnId}`, positive);
    return { ropes: ropes.map((rope) => ({ ...rope, barnId })), results };
  };
  const parts = [
    inBarn('2026-08-03', 'R1', 'B1', [0, 1]),
    inBarn('2026-08-03', 'R1', 'B2'),
    inBarn('2026-08-17', 'R2', 'B1'),
    inBarn('2026-08-17', 'R2', 'B2'),
    inBarn('2026-08-24', 'R3', 'B2'),
    inBarn('2026-09-07', 'R4', 'B1'),
    inBarn('2026-09-07', 'R4', 'B2'),
  ];
  const rounds = buildSiteRounds(
    site,
    parts.flatMap((part) => part.ropes),
    parts.flatMap((part, partIndex) => part.results.map((result) => ({ ...result, id: result.id + 100 * partIndex }))),
  );
  return siteConfidence(site, rounds);
}

const b1Status = (confidence: ReturnType<typeof siteConfidence>, index: number) =>
  confidence[index]!.barns.find((barn) => barn.barnId === 'B1' && barn.assayId === 'PRRSV')!.status;

describe('a new group of pigs clears a positive barn', () => {
  it('is clear at the first round of the new group, though only two negative rounds came', () => {
    const confidence = positiveThenRestocked([G1, G2]);
    expect(b1Status(confidence, 0)).toMatchObject({ state: 'positive', sinceRound: 1 });
    expect(b1Status(confidence, 1)).toMatchObject({ state: 'positive', sinceRound: 1 });
    expect(b1Status(confidence, 3)).toEqual({ state: 'clear', clearedAtRound: 4 });
  });

  it('stays positive without groups: two negative rounds are fewer than the five the program asks', () => {
    const confidence = positiveThenRestocked([]);
    expect(b1Status(confidence, 3)).toMatchObject({ state: 'positive', sinceRound: 1 });
  });
});
