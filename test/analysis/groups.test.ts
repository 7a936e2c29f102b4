/**
 * Groups of pigs (all-in/all-out: a barn filled and emptied as one group; common practice, no
 * source): a new group restarts the barn's probability of freedom from the prior, and a round in
 * which the barn is empty is neither a missed round nor missing ropes.
 */
import { describe, expect, it } from 'vitest';
import type { siteConfidence } from '../../src/analysis/confidence.js';
import type { BarnGroup } from '../../src/config/types.js';
import { buildSiteRounds } from '../../src/rounds/roundModel.js';
import { expectClose } from '../helpers/expectClose.js';
import { planFromRounds } from '../helpers/planFromRounds.js';
import { smallConfig } from './fixtures.js';
import { G1, G2, round, scenario, siteWith } from './groupScenario.js';

const barnOf = (confidence: ReturnType<typeof siteConfidence>, index: number, barnId: string) =>
  confidence[index]!.barns.find((entry) => entry.barnId === barnId)!;

describe('groups of pigs in the round model and confidence', () => {
  it('names the group of each barn in each round, and the empty barn as empty, no group', () => {
    const { rounds } = scenario([G1, G2]);
    const b1 = rounds.map((entry) => entry.barns.find((barn) => barn.barnId === 'B1')!);
    expect(b1.map((barn) => barn.group?.id ?? null)).toEqual(['G1', 'G1', null, 'G2']);
    expect(b1.map((barn) => barn.empty)).toEqual([false, false, true, false]);
    // The rope planned for the empty barn is not missing.
    expect(b1[2]!.missingSampleIds).toEqual([]);
    expect(b1[2]!.plannedMissing).toEqual([]);
  });

  it('lists the planned rope as missing when the barn is not empty (the same rounds without groups)', () => {
    const { rounds } = scenario([]);
    expect(rounds[2]!.barns.find((barn) => barn.barnId === 'B1')!.missingSampleIds).toEqual(['TST-PLANNED-1']);
  });

  it('restarts the barn\u2019s freedom from the prior at a new group (Martin, Cameron & Greiner 2007, update then discount)', () => {
    const { confidence } = scenario([G1, G2]);
    // SSe of 18 ropes of 36 pens at d = 1, Se = 1: 18/36 = 0.5 (hypergeometric by hand).
    const r1 = barnOf(confidence, 0, 'B1');
    expectClose(r1.priorFreedom!, 0.5, { rel: 1e-12 }, 'B1 round 1 prior: the configured prior');
    expectClose(r1.freedom!, 2 / 3, { rel: 1e-12 }, 'B1 round 1: 0.5 / (1 - 0.5 * 0.5)');
    expect(r1.freedomRestart).toBe(true);
    const r2 = barnOf(confidence, 1, 'B1');
    // 14 days = one interval: prior 2/3 * 0.99 = 0.66; PF' = 0.66 / (1 - 0.5 * 0.34) = 0.66 / 0.83.
    expectClose(r2.freedom!, 0.66 / 0.83, { rel: 1e-12 }, 'B1 round 2');
    expect(r2.freedomRestart).toBe(false);
    const empty = barnOf(confidence, 2, 'B1');
    expect(empty).toMatchObject({
      empty: true,
      tested: 0,
      detectionConfidence: 0,
      freedom: null,
      priorFreedom: null,
      group: null,
    });
    const r4 = barnOf(confidence, 3, 'B1');
    // G2's first round starts again from the prior 0.5: the same 2/3 as round 1.
    expect(r4.group?.id).toBe('G2');
    expect(r4.freedomRestart).toBe(true);
    expectClose(r4.priorFreedom!, 0.5, { rel: 1e-12 }, 'B1 round 4 prior after the new placement');
    expectClose(r4.freedom!, 2 / 3, { rel: 1e-12 }, 'B1 round 4');
  });

  it('keeps one chain for a barn without groups: the same rounds, continuing from round 2', () => {
    const { confidence } = scenario([G1, G2]);
    const b2 = [0, 1, 2, 3].map((index) => barnOf(confidence, index, 'B2'));
    expect(b2.map((entry) => entry.freedomRestart)).toEqual([false, false, false, false]);
    // Round 3, 7 days after round 2: PI over 7 days = 1 - 0.99^(7/14); prior = (0.66/0.83) * 0.99^0.5.
    expectClose(b2[2]!.priorFreedom!, (0.66 / 0.83) * Math.sqrt(0.99), { rel: 1e-12 }, 'B2 round 3 prior');
    // Without groups B1 continues as B2 does: round 4 does not start from the prior.
    const { confidence: ungrouped } = scenario([]);
    expect(barnOf(ungrouped, 3, 'B1').priorFreedom!).toBeGreaterThan(0.5);
  });

  it('leaves the empty barn out of the site\u2019s detection: round 3 is B2 alone', () => {
    const { confidence } = scenario([G1, G2]);
    // SSe = 1 - (1 - 0.5) over B2 alone = 0.5; B1 empty adds nothing and is not a missed barn.
    expectClose(confidence[2]!.sites[0]!.detectionConfidence, 0.5, { rel: 1e-12 }, 'site SSe round 3');
    // Rounds 1, 2, 4: two barns, 1 - 0.5^2 = 0.75.
    expectClose(confidence[3]!.sites[0]!.detectionConfidence, 0.75, { rel: 1e-12 }, 'site SSe round 4');
  });
});

describe('the next round\u2019s plan and an empty barn', () => {
  /** Plans after two rounds (3 and 17 Aug): due one interval (14 days) after the last, on 31 Aug. */
  function planWith(groups: readonly BarnGroup[], budget?: number) {
    const site = siteWith(groups);
    const config = smallConfig();
    const parts = [round('2026-08-03', 'R1', ['B1', 'B2']), round('2026-08-17', 'R2', ['B1', 'B2'])];
    const rounds = buildSiteRounds(
      site,
      parts.flatMap((part) => part.ropes),
      parts.flatMap((part) => part.results),
    );
    return planFromRounds(config, site, rounds, { today: '2026-08-18', ...(budget === undefined ? {} : { budget }) })
      .plan;
  }

  it('plans no rope in a barn that will be empty on the due date, and says so', () => {
    const plan = planWith([G1, G2]);
    expect(plan.dueDate).toBe('2026-08-31');
    // 31 Aug: G1 closed out on 20 Aug, G2 placed on 1 Sep: B1 stands empty.
    expect(plan.ropes.filter((rope) => rope.barnId === 'B1')).toEqual([]);
    expect(plan.ropes.filter((rope) => rope.barnId === 'B2').length).toBeGreaterThan(0);
    expect(plan.barns.find((barn) => barn.barnId === 'B1')!.sizing.routineRopes).toBe(0);
    expect(plan.notes.join(' ')).toMatch(/Barn B1 will be empty on 2026-08-31/);
  });

  it('gives a barn that will be empty no share of the rope budget', () => {
    const need = planWith([G1, G2]).barns.find((barn) => barn.barnId === 'B2')!.sizing.routineRopes;
    // A budget of exactly B2's own count: the empty B1 needs none, so nothing is shared out.
    const plan = planWith([G1, G2], need);
    expect(plan.sizing.allocation).toBeNull();
    expect(plan.barns.find((barn) => barn.barnId === 'B2')!.sizing.routineRopes).toBe(need);
    // Without groups both barns are surveyed and the same budget must be shared.
    expect(planWith([], need).sizing.allocation).not.toBeNull();
  });

  it('plans ropes in the barn when the next group is placed by the due date', () => {
    const plan = planWith([G1, { ...G2, placedOn: '2026-08-31' }]);
    expect(plan.ropes.filter((rope) => rope.barnId === 'B1').length).toBeGreaterThan(0);
  });
});
