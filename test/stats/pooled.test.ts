import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  imperfectDetection,
  pooledBinomialDetection,
  pooledDetection,
  pooledDetectionOfPools,
  poolSizes,
} from '../../src/stats/index.js';
import { expectClose } from '../helpers/expectClose.js';

/**
 * The definition by enumeration: every ordering of the N pens is equally likely; the first n are
 * roped and pooled in order in pools of k. Pens 0..d-1 are infected.
 */
function enumerated(pens: number, sampled: number, infected: number, poolSize: number, se: number, sp: number): number {
  let orderings = 0;
  let missSum = 0;
  const used = new Array<boolean>(pens).fill(false);
  const order: number[] = [];
  const visit = () => {
    if (order.length === sampled) {
      orderings++;
      let miss = 1;
      for (let start = 0; start < sampled; start += poolSize) {
        const pool = order.slice(start, start + poolSize);
        miss *= pool.some((pen) => pen < infected) ? 1 - se : sp;
      }
      missSum += miss;
      return;
    }
    for (let pen = 0; pen < pens; pen++) {
      if (used[pen]) continue;
      used[pen] = true;
      order.push(pen);
      visit();
      order.pop();
      used[pen] = false;
    }
  };
  visit();
  return 1 - missSum / orderings;
}

describe('pooled ropes', () => {
  it('meets the binomial check value for 5 pools of 3 at 10% with pool sensitivity 0.9', () => {
    // epiR 2.0.57 rsu.sep.rspool(r = 5, k = 3, pstar = 0.1, pse = 0.9, psp = 1) = 0.752887;
    // by hand: 1 - [(1 - 0.729) * 0.1 + 0.729]^5 = 1 - 0.7561^5.
    expectClose(pooledBinomialDetection(5, 3, 0.1, 0.9, 1), 1 - 0.7561 ** 5, { rel: 1e-13 }, 'r=5 k=3 p=0.1 PSe=0.9');
    expectClose(pooledBinomialDetection(5, 3, 0.1, 0.9, 1), 0.752887, { abs: 5e-7 }, 'epiR value');
  });

  it('agrees with enumeration of every ordering of a small barn', () => {
    for (const [pens, sampled, infected, poolSize] of [
      [6, 4, 2, 2],
      [7, 5, 1, 3],
      [6, 6, 3, 4],
      [5, 3, 2, 1],
    ] as const) {
      for (const [se, sp] of [
        [0.9, 1],
        [0.6, 0.95],
      ] as const) {
        expectClose(
          pooledDetection(pens, sampled, infected, poolSize, se, sp),
          enumerated(pens, sampled, infected, poolSize, se, sp),
          { abs: 1e-13 },
          `N=${pens} n=${sampled} d=${infected} k=${poolSize} Se=${se} Sp=${sp}`,
        );
      }
    }
  });

  it('is the imperfect-test detection when each pool holds one rope', () => {
    // Pools of one rope with PSe = Se, PSp = 1: Cameron & Baldock 1998's finite form.
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 60 }),
        fc.nat(),
        fc.nat(),
        fc.double({ min: 0, max: 1, noNaN: true }),
        (pens, n, d, se) => {
          const sampled = n % (pens + 1);
          const infected = d % (pens + 1);
          expectClose(
            pooledDetection(pens, sampled, infected, 1, se, 1),
            imperfectDetection(pens, sampled, infected, se),
            { abs: 1e-12 },
            `N=${pens} n=${sampled} d=${infected} Se=${se}`,
          );
        },
      ),
      { seed: 11, numRuns: 300 },
    );
  });

  it('approaches the binomial form in a very large barn', () => {
    // Hypergeometric -> binomial as N grows with d/N fixed (Johnson, Kemp & Kotz 2005, ch. 6).
    const finite = pooledDetection(1_000_000, 15, 100_000, 3, 0.9, 1);
    expectClose(finite, pooledBinomialDetection(5, 3, 0.1, 0.9, 1), { abs: 1e-5 }, 'N=1e6 n=15 d=1e5 k=3');
  });

  it('loses detection as pools grow when the pool sensitivity falls with dilution', () => {
    // 20 of 40 pens roped, 4 infected: single ropes at Se 0.9 against pools of 5 at PSe 0.7
    // (pool sensitivity a program setting; dilution lowers it, common practice, no source).
    const single = pooledDetection(40, 20, 4, 1, 0.9);
    const pooled = pooledDetection(40, 20, 4, 5, 0.7);
    expect(pooled).toBeLessThan(single);
    expect(poolSizes(7, 3)).toEqual([3, 3, 1]);
    expect(() => pooledDetection(10, 11, 1, 2, 0.9)).toThrow('`sampled` must be an integer in [0, pens], got 11');
  });

  it('takes pools of any sizes and accuracies: equal pools are pooledDetection, and in a very large barn the epiR check value', () => {
    const pools = (sizes: readonly number[], se: number, sp: number) =>
      sizes.map((size) => ({ size, sensitivity: se, specificity: sp }));
    expectClose(
      pooledDetectionOfPools(40, 4, pools([5, 5, 5, 5], 0.7, 0.97)),
      pooledDetection(40, 20, 4, 5, 0.7, 0.97),
      { abs: 1e-14 },
      'N=40 d=4 four pools of 5',
    );
    // epiR 2.0.57 rsu.sep.rspool(r = 5, k = 3, pstar = 0.1, pse = 0.9, psp = 1) = 0.752887, approached as N grows (d/N = 0.1).
    expectClose(
      pooledDetectionOfPools(1_000_000, 100_000, pools([3, 3, 3, 3, 3], 0.9, 1)),
      0.752887,
      { abs: 1e-5 },
      'N=1e6 d=1e5 five pools of 3',
    );
    // The order of the pools does not matter (the partition of the roped pens is exchangeable).
    const mixed = [...pools([3, 2], 0.7, 0.98), ...pools([1, 1], 0.8, 1)];
    expectClose(
      pooledDetectionOfPools(12, 3, mixed),
      pooledDetectionOfPools(12, 3, [...mixed].reverse()),
      { abs: 1e-14 },
      'order of pools',
    );
    expect(() => pooledDetectionOfPools(4, 1, pools([3, 2], 0.9, 1))).toThrow(
      '`sampled` must be an integer in [0, pens], got 5',
    );
  });
});
