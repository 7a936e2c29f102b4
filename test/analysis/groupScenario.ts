/**
 * A site of two barns of 36 pens: B1 run by groups (Summer placed 1 Aug, closed out 20 Aug;
 * Autumn placed 1 Sep), B2 not. Four rounds of 18 negative ropes per barn roped: 3 Aug, 17 Aug,
 * 24 Aug (B2 only: B1 is empty; a rope planned in B1 never came back), 7 Sep.
 */
import { siteConfidence } from '../../src/analysis/confidence.js';
import type { BarnGroup, Site } from '../../src/config/types.js';
import { buildSiteRounds } from '../../src/rounds/roundModel.js';
import { roundRopes, smallConfig } from './fixtures.js';

export const G1: BarnGroup = { id: 'G1', label: 'Summer', placedOn: '2026-08-01', closedOn: '2026-08-20' };
export const G2: BarnGroup = { id: 'G2', label: 'Autumn', placedOn: '2026-09-01', closedOn: null };

/** The small site with a second barn B2 (same layout, not run by groups) and B1 given `groups`. */
export function siteWith(groups: readonly BarnGroup[]): Site {
  const site = smallConfig().sites[0]!;
  const b1 = { ...site.barns[0]!, groups };
  const b2 = { ...site.barns[0]!, id: 'B2', name: 'B2', groups: [] };
  return {
    ...site,
    barns: [b1, b2],
    barnById: new Map([
      ['B1', b1],
      ['B2', b2],
    ]),
  };
}

/** 18 negative ropes on the first 18 pens of each barn named, on `date`. */
export function round(date: string, prefix: string, barns: readonly string[]) {
  const parts = barns.map((barnId) => {
    const { ropes, results } = roundRopes(date, 18, `${prefix}${barnId}`);
    return { ropes: ropes.map((rope) => ({ ...rope, barnId })), results };
  });
  return { ropes: parts.flatMap((part) => part.ropes), results: parts.flatMap((part) => part.results) };
}

export function scenario(groups: readonly BarnGroup[]) {
  const site = siteWith(groups);
  const r1 = round('2026-08-03', 'R1', ['B1', 'B2']);
  const r2 = round('2026-08-17', 'R2', ['B1', 'B2']);
  // Round 3: barn B1 is between G1's close-out (20 Aug) and G2's placement (1 Sep); its planned ropes never came back.
  const r3 = round('2026-08-24', 'R3', ['B2']);
  const r4 = round('2026-09-07', 'R4', ['B1', 'B2']);
  const planned = [{ sampleId: 'TST-PLANNED-1', barnId: 'B1', penId: 'A1', dueOn: '2026-08-24' }];
  const all = [r1, r2, r3, r4];
  const rounds = buildSiteRounds(
    site,
    all.flatMap((part) => part.ropes),
    all.flatMap((part) => part.results),
    planned,
  );
  return { site, rounds, confidence: siteConfidence(site, rounds) };
}
