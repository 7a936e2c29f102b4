import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import {
  freedomAcrossRounds,
  freedomEquilibrium,
  freedomPosterior,
  introductionOver,
  type FreedomOrder,
} from '../../src/stats/index.js';
import { expectClose } from '../helpers/expectClose.js';

describe('probability of freedom across rounds (Martin, Cameron & Greiner 2007)', () => {
  it('discounting first gives the check value worked by hand: prior 0.495, posterior 0.8305369', () => {
    // Martin, Cameron & Greiner 2007, Prev Vet Med 79:71-97 (by hand): SSe = 0.8, PI = 0.01, prior 0.5, discount first.
    // By hand: 0.5 * 0.99 = 0.495; 0.495 / (1 - 0.8 * 0.505) = 0.495 / 0.596 = 0.83053691.
    const result = freedomAcrossRounds({ prior: 0.5, introduction: 0.01, order: 'discount-then-update' }, [
      { sensitivity: 0.8 },
    ]);
    expectClose(result.rounds[0]!.prior, 0.495, { rel: 1e-14 }, 'discounted prior');
    expectClose(result.rounds[0]!.posterior, 0.8305369, { abs: 5e-8 }, 'posterior (7 digits)');
    expectClose(result.rounds[0]!.posterior, 0.495 / 0.596, { rel: 1e-14 }, 'posterior (by hand)');
    // The next round starts from the posterior discounted again: 0.83053691 * 0.99.
    expectClose(result.rounds[0]!.nextPrior, (0.495 / 0.596) * 0.99, { rel: 1e-14 }, 'nextPrior');
  });

  it('updating first (textbook order) follows the hand computation over two rounds', () => {
    // By hand: 0.5 / (1 - 0.8 * 0.5) = 0.5 / 0.6 = 0.833333; * 0.99 = 0.825;
    // 0.825 / (1 - 0.8 * 0.175) = 0.825 / 0.86 = 0.959302; * 0.99 = 0.949709.
    const result = freedomAcrossRounds({ prior: 0.5, introduction: 0.01, order: 'update-then-discount' }, [
      { sensitivity: 0.8 },
      { sensitivity: 0.8 },
    ]);
    const [first, second] = result.rounds;
    expectClose(first!.prior, 0.5, { rel: 1e-15 }, 'round 1 prior');
    expectClose(first!.posterior, 0.5 / 0.6, { rel: 1e-14 }, 'round 1 posterior');
    expectClose(first!.nextPrior, 0.825, { rel: 1e-14 }, 'round 1 nextPrior');
    expectClose(second!.posterior, 0.825 / 0.86, { rel: 1e-14 }, 'round 2 posterior');
    expectClose(second!.nextPrior, (0.825 / 0.86) * 0.99, { rel: 1e-14 }, 'round 2 nextPrior');
  });

  it('levels off at the analytic equilibrium PF* = 1 - PI/SSe', () => {
    // By hand: fixed point of PF -> 0.99 PF / (1 - 0.8 (1 - PF)): 1 - 0.2 + 0.8 PF = 0.99 -> PF = 0.9875;
    // the posterior there is 0.9875 / 0.99 = 0.997475.
    const eq = freedomEquilibrium(0.8, 0.01);
    expectClose(eq.prior, 0.9875, { rel: 1e-14 }, 'PF*');
    expectClose(eq.posterior, 0.9875 / 0.99, { rel: 1e-14 }, 'posterior at PF*');
    // Iterating the chain (independent of the closed form) converges to the same place.
    const rounds = new Array(400).fill({ sensitivity: 0.8 });
    const result = freedomAcrossRounds({ prior: 0.2, introduction: 0.01, order: 'update-then-discount' }, rounds);
    expectClose(result.rounds[399]!.nextPrior, 0.9875, { rel: 1e-12 }, 'iterated nextPrior');
    expectClose(result.equilibrium!.posterior, result.rounds[399]!.posterior, { rel: 1e-12 }, 'iterated posterior');
  });

  it('decays to 0 when introduction outweighs what a round can show', () => {
    // By hand: PI >= SSe means 1 - SSe + SSe PF >= 1 - PI for all PF, so each step loses ground.
    expect(freedomEquilibrium(0.3, 0.4)).toEqual({ prior: 0, posterior: 0 });
  });

  it('resets after a positive round and starts again from the configured prior', () => {
    const rounds = [{ sensitivity: 0.8 }, { sensitivity: 0.8, positive: true }, { sensitivity: 0.8 }];
    const textbook = freedomAcrossRounds({ prior: 0.5, introduction: 0.01, order: 'update-then-discount' }, rounds);
    expect(textbook.rounds[1]!.posterior).toBe(0);
    expect(textbook.rounds[1]!.positive).toBe(true);
    expect(textbook.rounds[1]!.nextPrior).toBe(0.5);
    // By hand: round 3 repeats round 1, 0.5 / 0.6.
    expectClose(textbook.rounds[2]!.posterior, 0.5 / 0.6, { rel: 1e-14 }, 'after reset, update first');
    const discountFirst = freedomAcrossRounds(
      { prior: 0.5, introduction: 0.01, order: 'discount-then-update' },
      rounds,
    );
    // By hand: the restart is discounted like the start: 0.495 -> 0.495 / 0.596.
    expectClose(discountFirst.rounds[2]!.prior, 0.495, { rel: 1e-14 }, 'after reset, discount first');
    expectClose(
      discountFirst.rounds[2]!.posterior,
      0.495 / 0.596,
      { rel: 1e-14 },
      'after reset, discount first posterior',
    );
  });

  it('scales the introduction risk with the days actually elapsed, so a late round lowers confidence', () => {
    // By hand: PI = 0.01 per 28 days; 56 days -> 1 - 0.99^2 = 0.0199; 14 days -> 1 - 0.99^0.5.
    expectClose(introductionOver(0.01, 56, 28), 0.0199, { rel: 1e-13 }, '56 of 28 days');
    expectClose(introductionOver(0.01, 14, 28), 1 - Math.sqrt(0.99), { rel: 1e-13 }, '14 of 28 days');
    expect(introductionOver(0.01, 0, 28)).toBe(0);
    const onTime = freedomAcrossRounds(
      { prior: 0.5, introduction: 0.01, order: 'update-then-discount', intervalDays: 28 },
      [{ sensitivity: 0.8 }, { sensitivity: 0.8, elapsedDays: 28 }],
    );
    const late = freedomAcrossRounds(
      { prior: 0.5, introduction: 0.01, order: 'update-then-discount', intervalDays: 28 },
      [{ sensitivity: 0.8 }, { sensitivity: 0.8, elapsedDays: 56 }],
    );
    // By hand: the late round starts from (0.5 / 0.6) * 0.99^2 = 0.81675.
    expectClose(late.rounds[1]!.prior, (0.5 / 0.6) * 0.9801, { rel: 1e-13 }, 'late prior');
    expectClose(onTime.rounds[1]!.prior, 0.825, { rel: 1e-13 }, 'on-time prior');
    expect(late.rounds[1]!.posterior).toBeLessThan(onTime.rounds[1]!.posterior);
  });

  it('stays in [0, 1] and never rises when the introduction risk rises', () => {
    // Invariants (STYLE.md): freedom in [0, 1]; the posterior is increasing in the prior, the discount
    // decreasing in PI, so every round's posterior is non-increasing in PI.
    const order = fc.constantFrom<FreedomOrder>('update-then-discount', 'discount-then-update');
    fc.assert(
      fc.property(
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.array(fc.record({ sensitivity: fc.double({ min: 0, max: 1, noNaN: true }), positive: fc.boolean() }), {
          minLength: 1,
          maxLength: 12,
        }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        order,
        (prior, rounds, pi, more, o) => {
          const higher = pi + (1 - pi) * more;
          const low = freedomAcrossRounds({ prior, introduction: pi, order: o }, rounds);
          const high = freedomAcrossRounds({ prior, introduction: higher, order: o }, rounds);
          low.rounds.forEach((step, i) => {
            for (const v of [step.prior, step.posterior, step.nextPrior]) {
              expect(v).toBeGreaterThanOrEqual(0);
              expect(v).toBeLessThanOrEqual(1);
            }
            expect(high.rounds[i]!.posterior, `round ${i} PI ${pi} -> ${higher}`).toBeLessThanOrEqual(
              step.posterior + 1e-15,
            );
            expect(high.rounds[i]!.nextPrior, `round ${i} PI ${pi} -> ${higher}`).toBeLessThanOrEqual(
              step.nextPrior + 1e-15,
            );
          });
        },
      ),
      { numRuns: 300, seed: 41 },
    );
  });

  it('treats a prior of 0 with a perfect round as still not free instead of 0/0', () => {
    // By hand: PF = 0, SSe = 1 is 0 / 0; a barn known infected stays infected.
    expect(freedomPosterior(0, 1)).toBe(0);
    expect(freedomPosterior(1, 0.5)).toBe(1);
  });

  it('rejects an unknown order and out-of-range probabilities', () => {
    expect(() =>
      freedomAcrossRounds({ prior: 0.5, introduction: 0.01, order: 'sideways' as FreedomOrder }, []),
    ).toThrow(/`order` must be one of/);
    expect(() => freedomAcrossRounds({ prior: 1.5, introduction: 0.01, order: 'update-then-discount' }, [])).toThrow(
      '`prior` must be a number in [0, 1], got 1.5',
    );
    expect(() =>
      freedomAcrossRounds({ prior: 0.5, introduction: 0.01, order: 'update-then-discount' }, [{ sensitivity: -1 }]),
    ).toThrow('`rounds[0].sensitivity` must be a number in [0, 1], got -1');
    expect(
      freedomAcrossRounds({ prior: 0.5, introduction: 0.01, order: 'update-then-discount' }, []).equilibrium,
    ).toBeNull();
  });
});
