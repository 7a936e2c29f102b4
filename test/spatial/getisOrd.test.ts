import { describe, expect, it } from 'vitest';
import { localGiStar } from '../../src/spatial/getisOrd.js';
import { knnWeights } from '../../src/spatial/weights.js';
import { expectClose } from '../helpers/expectClose.js';

const row6 = (style: 'binary' | 'row') =>
  knnWeights(
    [0, 1, 2, 3, 4, 5].map((x) => ({ id: `P${x + 1}`, x, y: 0 })),
    1,
    style,
  );

describe('local Gi*', () => {
  it('gives 1.581139 for pen 2 of x = (0,1,1,0,0,0) on a fence row of six', () => {
    // Getis & Ord 1992; Ord & Getis 1995, by hand: window {1,2,3} with w_ii = 1: sum = 2, W = 3,
    // mean 1/3, s^2 = 2/6 - 1/9 = 2/9; (2 - 1) / (sqrt(2/9) sqrt((6*3 - 9)/5)) = sqrt(2.5) = 1.581139.
    const gi = localGiStar(row6('binary'), [0, 1, 1, 0, 0, 0]);
    expectClose(gi[1]!.z!, 1.581139, { rel: 1e-6 }, 'Gi* pen 2');
    expect(gi[1]!.window).toBe(3);
  });

  it('gives the same z with row-standardised weights (Gi* is invariant to rescaling a row)', () => {
    // Ord & Getis 1995: numerator and denominator are both linear in the weights of row i.
    const a = localGiStar(row6('binary'), [0, 1, 1, 0, 0, 0]);
    const b = localGiStar(row6('row'), [0, 1, 1, 0, 0, 0]);
    a.forEach((g, i) => expectClose(b[i]!.z!, g.z!, { rel: 1e-12 }, `pen ${i + 1}`));
  });

  it('gives pen 1 of the row the hand value (0 - 2/3)/(sqrt(2/9) sqrt((12 - 4)/5))', () => {
    // By hand: window {1,2}, sum x = 1, W = 2, S1 = 2: (1 - 2/3) / (sqrt(2/9) sqrt(8/5)).
    const gi = localGiStar(row6('binary'), [0, 1, 1, 0, 0, 0]);
    expectClose(gi[0]!.z!, (1 - 2 / 3) / (Math.sqrt(2 / 9) * Math.sqrt(8 / 5)), { rel: 1e-12 }, 'Gi* pen 1');
  });

  it('returns null z, never NaN, when all loads are equal', () => {
    const gi = localGiStar(row6('binary'), [0, 0, 0, 0, 0, 0]);
    expect(gi.every((g) => g.z === null)).toBe(true);
  });
});
