import { describe, expect, it } from 'vitest';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { buildSiteRounds } from '../../src/rounds/roundModel.js';
import { expectClose } from '../helpers/expectClose.js';
import { roundRopes, smallConfig } from './fixtures.js';

describe('what each round proved, per barn and site', () => {
  it('gives 1/6 for six negative ropes in a barn of 36 pens at one infected pen (Cameron & Baldock 1998 hypergeometric check value)', () => {
    const config = smallConfig();
    const site = config.sites[0]!;
    const { ropes, results } = roundRopes('2026-08-03', 6, 'R1');
    const rounds = buildSiteRounds(site, ropes, results);
    const [round] = siteConfidence(site, rounds);
    const barn = round!.barns[0]!;
    expect(barn).toMatchObject({ pens: 36, tested: 6, designInfected: 1 });
    expectClose(barn.detectionConfidence, 1 / 6, { rel: 1e-12 }, 'N=36 n=6 d=1 Se=1');
    // Ropes needed at 95% with d=1 and Se=1: n = ceil(0.95 * 36) = 35 (method 1, by hand: 1 - (N-n)/N >= C).
    expect(barn.ropesNeeded).toBe(35);
    expect(barn.prevalence).toBeNull();
  });

  it('gives 0.848028 with nine infected pens of 36 and six ropes (Cameron & Baldock 1998 hypergeometric check value)', () => {
    const config = smallConfig({ designPrevalence: 0.25 });
    const site = config.sites[0]!;
    const { ropes, results } = roundRopes('2026-08-03', 6, 'R1');
    const [round] = siteConfidence(site, buildSiteRounds(site, ropes, results));
    expect(round!.barns[0]!.designInfected).toBe(9);
    expectClose(round!.barns[0]!.detectionConfidence, 0.848028, { abs: 5e-7 }, 'N=36 n=6 d=9');
  });

  it('updates freedom round by round and resets it after a positive round (Martin, Cameron & Greiner 2007, method 6)', () => {
    // One negative round clears the site here, so that round 4 shows the restarted probability.
    const config = smallConfig({ clearAfterNegativeRounds: 1 });
    const site = config.sites[0]!;
    const r1 = roundRopes('2026-08-03', 18, 'R1');
    const r2 = roundRopes('2026-08-17', 18, 'R2');
    const r3 = roundRopes('2026-08-31', 18, 'R3', [4]);
    const r4 = roundRopes('2026-09-28', 18, 'R4');
    const rounds = buildSiteRounds(
      site,
      [...r1.ropes, ...r2.ropes, ...r3.ropes, ...r4.ropes],
      [...r1.results, ...r2.results, ...r3.results, ...r4.results],
    );
    const confidence = siteConfidence(site, rounds);
    const sse = 0.5; // 18 of 36 pens, d = 1, Se = 1: P = 18/36 (method 1 by hand)
    const steps = confidence.map((round) => round.sites[0]!);
    expectClose(steps[0]!.detectionConfidence, sse, { rel: 1e-12 }, 'SSe round 1');
    // Round 1: PF' = 0.5 / (1 - 0.5 * 0.5) = 2/3.
    expectClose(steps[0]!.freedom!, 2 / 3, { rel: 1e-12 }, 'posterior round 1');
    // Round 2, 14 days later: prior 2/3 * (1 - 0.01) = 0.66; PF' = 0.66 / (1 - 0.5 * 0.34) = 0.66 / 0.83.
    expectClose(steps[1]!.priorFreedom, 0.66, { rel: 1e-12 }, 'prior round 2');
    expectClose(steps[1]!.freedom!, 0.66 / 0.83, { rel: 1e-12 }, 'posterior round 2');
    // Round 3 is positive: the site is positive, so no probability of freedom (status instead).
    expect(steps[2]!).toMatchObject({
      positive: true,
      freedom: null,
      freedomReset: true,
      status: { state: 'positive', sinceRound: 3 },
    });
    // Round 4 restarts from the prior 0.5; 28 days gap does not matter for the restart in update-then-discount order.
    expect(steps[3]!.status).toEqual({ state: 'clear', clearedAtRound: 4 });
    expectClose(steps[3]!.freedom!, 2 / 3, { rel: 1e-12 }, 'posterior after the restart');
    // The positive round's prevalence: 1 of 18 sampled, exact 95% interval (Clopper-Pearson) upper bound 0.2729 (from memory, checked by the oracle tests of src/stats).
    const barn = confidence[2]!.barns[0]!;
    expectClose(barn.prevalence!.apparent, 1 / 18, { rel: 1e-12 }, 'apparent prevalence');
    expect(barn.prevalence!.upper95).toBeGreaterThan(0.27);
    expect(barn.prevalence!.upper95).toBeLessThan(0.28);
  });

  it('lets a late round cost confidence: introduction risk scales with the days actually elapsed', () => {
    const config = smallConfig();
    const site = config.sites[0]!;
    const onTime = roundRopes('2026-08-17', 18, 'B');
    const late = roundRopes('2026-09-14', 18, 'B');
    const first = roundRopes('2026-08-03', 18, 'A');
    const freedomOnTime = siteConfidence(
      site,
      buildSiteRounds(site, [...first.ropes, ...onTime.ropes], [...first.results, ...onTime.results]),
    )[1]!.sites[0]!;
    const freedomLate = siteConfidence(
      site,
      buildSiteRounds(site, [...first.ropes, ...late.ropes], [...first.results, ...late.results]),
    )[1]!.sites[0]!;
    // 42 days (2026-08-03 to 2026-09-14) = three intervals: 1 - PI = 0.99^3 (method 6 with elapsed-days scaling).
    expectClose(freedomLate.priorFreedom, (2 / 3) * 0.99 ** 3, { rel: 1e-12 }, 'prior after 42 days');
    expect(freedomLate.freedom!).toBeLessThan(freedomOnTime.freedom!);
  });
});
