import { describe, expect, it } from 'vitest';
import type { Config } from '../../src/config/types.js';
import { buildSiteRounds } from '../../src/rounds/roundModel.js';
import { parseSampleId } from '../../src/plan/sampleId.js';
import { detectionFor } from '../../src/stats/detection.js';
import { expectClose } from '../helpers/expectClose.js';
import { planFromRounds } from '../helpers/planFromRounds.js';
import { roundRopes, smallConfig } from './fixtures.js';

function planFor(config: Config, options: { budget?: number } = {}) {
  const site = config.sites[0]!;
  const { ropes, results } = roundRopes('2026-08-03', 10, 'R1');
  const rounds = buildSiteRounds(site, ropes, results);
  return planFromRounds(config, site, rounds, { today: '2026-08-10', ...options }).plan;
}

describe('the next-round plan', () => {
  it('sizes each barn to the target, and one rope fewer would fall below it (hypergeometric, Cameron & Baldock 1998)', () => {
    const config = smallConfig({ designPrevalence: 0.1, ropeSensitivity: 0.9 });
    const plan = planFor(config);
    const barn = plan.barns[0]!.sizing;
    const detect = detectionFor({ pens: 36, infected: 4, sensitivity: 0.9 });
    expect(barn.designInfected).toBe(4); // ceil(0.1 * 36) = 4
    expect(detect(barn.routineRopes)).toBeGreaterThanOrEqual(0.95);
    expect(detect(barn.routineRopes - 1)).toBeLessThan(0.95);
    expect(barn.plannedHypergeometric).toBeGreaterThanOrEqual(0.95);
    expect(plan.ropes.filter((rope) => rope.reason === 'routine').length).toBeLessThanOrEqual(barn.routineRopes);
  });

  it('says plainly when no single round can reach the target, with the rounds that would', () => {
    // Follows from Cameron & Baldock 1998: with one infected pen the ceiling is Se.
    // N = 36, d = 1, Se = 0.9, target 0.95: a census reaches only 0.90; two rounds reach 1 - 0.1^2 = 0.99.
    const plan = planFor(smallConfig({ ropeSensitivity: 0.9 }));
    const barn = plan.barns[0]!.sizing;
    expect(barn.reachable).toBe(false);
    expectClose(barn.ceiling!, 0.9, { abs: 1e-12 }, 'census ceiling 1 - (1 - Se)^d, N=36 d=1 Se=0.9');
    expect(barn.roundsNeeded).toBe(2);
    expect(barn.statement).toMatch(/No single round reaches 95.0%.*2 negative rounds/);
  });

  it('keeps the routine ropes within the rope budget', () => {
    const plan = planFor(smallConfig({ designPrevalence: 0.1, ropeSensitivity: 0.9, ropeBudget: 8 }));
    expect(plan.barns[0]!.sizing.routineRopes).toBe(8);
    expect(plan.sizing.notes.join(' ')).toMatch(/budget of 8/);
  });

  it('gives unique, checkable sample IDs for the next round and a due date one interval after the last round', () => {
    const plan = planFor(smallConfig({ designPrevalence: 0.1, ropeSensitivity: 0.9 }));
    expect(plan.round).toBe(2);
    expect(plan.dueDate).toBe('2026-08-17');
    const ids = plan.ropes.map((rope) => rope.sampleId);
    expect(new Set(ids).size).toBe(ids.length);
    for (const id of ids) expect(parseSampleId(id)).toMatchObject({ ok: true, siteCode: 'TST', round: 2 });
  });

  it('credits fixed spatial sampling with the spread model and shows the hypergeometric count beside it', () => {
    const plan = planFor(
      smallConfig(
        { designPrevalence: 0.1, ropeSensitivity: 0.9 },
        { sizingModel: 'spatial', spreadRealisations: 1000 },
      ),
    );
    const barn = plan.barns[0]!.sizing;
    expect(barn.model).toMatch(/spread model/);
    expect(barn.plannedSpreadModel!).toBeGreaterThanOrEqual(0.95);
    // Under contagious spread, evenly spaced ropes need no more ropes than random ones (common practice, no source).
    expect(barn.routineRopes).toBeLessThanOrEqual(barn.hypergeometricRopes!);
  });
});
