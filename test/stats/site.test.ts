import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { barnTargetForSite, siteDetection } from '../../src/stats/index.js';
import { expectClose } from '../helpers/expectClose.js';

describe('site-level detection', () => {
  it('combines three similar barns at 0.85 into 0.996625', () => {
    // Martin, Cameron & Greiner 2007, Prev Vet Med 79:71-97: 1 - 0.15^3 = 1 - 0.003375 = 0.996625 (by hand).
    expectClose(siteDetection([0.85, 0.85, 0.85]), 0.996625, { rel: 1e-13 }, 'k=3 p=0.85');
  });

  it('combines unequal barns as 1 - prod(1 - p_i)', () => {
    // By hand: 1 - 0.5 * 0.8 * 0.9 = 0.64.
    expectClose(siteDetection([0.5, 0.2, 0.1]), 0.64, { rel: 1e-13 }, 'p=0.5,0.2,0.1');
    expect(siteDetection([])).toBe(0);
    expect(siteDetection([0.3, 1])).toBe(1);
  });

  it('keeps precision for many barns at tiny confidence', () => {
    // By hand: 1 - (1 - 1e-12)^1000 = 1e-9 - 4.995e-19 + ..., so ~1e-9 to 1e-9 relative.
    expectClose(siteDetection(new Array(1000).fill(1e-12)), 1e-9, { rel: 1e-9 }, 'k=1000 p=1e-12');
  });

  it('inverts: the barn-level confidence needed for a site target', () => {
    // Martin, Cameron & Greiner 2007, Prev Vet Med 79:71-97: 1 - (1 - C)^(1/k); with C = 0.996625, k = 3 back to 0.85 (by hand above).
    expectClose(barnTargetForSite(0.996625, 3), 0.85, { rel: 1e-12 }, 'C=0.996625 k=3');
    // By hand: 1 - 0.05^(1/2) = 0.776393.
    expectClose(barnTargetForSite(0.95, 2), 1 - Math.sqrt(0.05), { rel: 1e-13 }, 'C=0.95 k=2');
    fc.assert(
      fc.property(fc.double({ min: 0, max: 0.999999, noNaN: true }), fc.integer({ min: 1, max: 50 }), (c, k) => {
        const p = barnTargetForSite(c, k);
        expectClose(siteDetection(new Array(k).fill(p)), c, { rel: 1e-10, abs: 1e-15 }, `C=${c} k=${k}`);
      }),
      { numRuns: 200, seed: 31 },
    );
  });

  it('rejects probabilities outside [0, 1] naming the barn', () => {
    expect(() => siteDetection([0.5, 1.2])).toThrow('`barnProbabilities[1]` must be a number in [0, 1], got 1.2');
    expect(() => barnTargetForSite(0.95, 0)).toThrow('`barns` must be an integer in [1, 2^53), got 0');
  });
});
