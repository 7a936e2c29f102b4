import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { designInfectedBarns, siteDetection, twoStageSiteDetection } from '../../src/stats/index.js';
import { expectClose } from '../helpers/expectClose.js';

/** Every set of D infected barns, equally likely: the definition, by enumeration. */
function enumerated(p: readonly number[], infected: number): number {
  let sets = 0;
  let missSum = 0;
  const visit = (start: number, chosen: number[]) => {
    if (chosen.length === infected) {
      sets++;
      missSum += chosen.reduce((miss, i) => miss * (1 - p[i]!), 1);
      return;
    }
    for (let i = start; i < p.length; i++) visit(i + 1, [...chosen, i]);
  };
  visit(0, []);
  return 1 - missSum / sets;
}

describe('two-stage site detection', () => {
  it('meets the published check values for barns at 0.9, 0.5 and 0.2', () => {
    // Cameron & Baldock 1998 two-stage design; epiR rsu.sep.rsvarse gives the mean for D = 1:
    // (0.9 + 0.5 + 0.2) / 3 = 0.533333 (by hand).
    expectClose(twoStageSiteDetection([0.9, 0.5, 0.2], 1), 1.6 / 3, { rel: 1e-14 }, 'D=1');
    // By hand: 1 - (0.1*0.5 + 0.1*0.8 + 0.5*0.8) / C(3, 2) = 1 - 0.53 / 3 = 0.823333.
    expectClose(twoStageSiteDetection([0.9, 0.5, 0.2], 2), 1 - 0.53 / 3, { rel: 1e-14 }, 'D=2');
    // Every barn infected: 1 - 0.1*0.5*0.8 = 0.96 (the all-barns form, Martin, Cameron & Greiner 2007).
    expectClose(twoStageSiteDetection([0.9, 0.5, 0.2], 3), 0.96, { rel: 1e-14 }, 'D=3');
  });

  it('agrees with enumeration of every set of infected barns', () => {
    fc.assert(
      fc.property(
        fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 9 }),
        fc.nat(),
        (p, pick) => {
          const infected = 1 + (pick % p.length);
          expectClose(
            twoStageSiteDetection(p, infected),
            enumerated(p, infected),
            { abs: 1e-13 },
            `p=${p.join(',')} D=${infected}`,
          );
        },
      ),
      { seed: 20261202, numRuns: 400 },
    );
  });

  it('reduces to 1 - prod(1 - p) when every barn is infected and to 1 - (1 - p)^D for alike barns', () => {
    fc.assert(
      fc.property(fc.array(fc.double({ min: 0, max: 1, noNaN: true }), { minLength: 1, maxLength: 40 }), (p) => {
        expectClose(twoStageSiteDetection(p, p.length), siteDetection(p), { abs: 1e-13 }, `p=${p.join(',')}`);
      }),
      { seed: 7, numRuns: 200 },
    );
    // Alike barns: the published special case P = 1 - (1 - p)^k with k = D infected barns (by hand).
    expectClose(twoStageSiteDetection(new Array(12).fill(0.6), 4), 1 - 0.4 ** 4, { rel: 1e-14 }, 'H=12 p=0.6 D=4');
  });

  it('stays exact and finite for 200 barns without enumeration', () => {
    const p = Array.from({ length: 200 }, (_, i) => (i % 10) / 10);
    const value = twoStageSiteDetection(p, 100);
    expect(Number.isFinite(value)).toBe(true);
    // Monotone in D: more infected barns can only raise the chance of finding one.
    let previous = 0;
    for (const d of [1, 2, 5, 20, 100, 150, 200]) {
      const next = twoStageSiteDetection(p, d);
      expect(next).toBeGreaterThanOrEqual(previous - 1e-15);
      previous = next;
    }
    // D = 1 is the mean: 20 barns at each of 0, 0.1, ..., 0.9 give 0.45 (by hand).
    expectClose(twoStageSiteDetection(p, 1), 0.45, { rel: 1e-13 }, 'H=200 D=1');
  });

  it('counts an unsampled barn as p = 0 and refuses a D outside [1, H]', () => {
    // Two barns surveyed at 0.9, one not: D = 1 gives 1.8 / 3 = 0.6 (by hand).
    expectClose(twoStageSiteDetection([0.9, 0.9, 0], 1), 0.6, { rel: 1e-14 }, 'unsampled barn');
    expect(() => twoStageSiteDetection([0.5, 0.5], 3)).toThrow(
      '`infectedBarns` must be an integer in [1, barns], got 3',
    );
    expect(() => twoStageSiteDetection([], 1)).toThrow(RangeError);
    expect(() => twoStageSiteDetection([1.5], 1)).toThrow(RangeError);
  });

  it('rounds a proportion of barns up to whole barns', () => {
    // A design value of 10% of 3 barns is one barn; 50% of 5 is 3 (rounded up, common practice, no source).
    expect(designInfectedBarns({ kind: 'proportion', value: 0.1 }, 3)).toBe(1);
    expect(designInfectedBarns({ kind: 'proportion', value: 0.5 }, 5)).toBe(3);
    expect(designInfectedBarns({ kind: 'proportion', value: 0.2 }, 5)).toBe(1);
    expect(designInfectedBarns({ kind: 'barns', value: 2 }, 5)).toBe(2);
    expect(() => designInfectedBarns({ kind: 'barns', value: 6 }, 5)).toThrow(RangeError);
  });
});
