import { describe, expect, it } from 'vitest';
import cdf from '@stdlib/stats-base-dists-hypergeometric-cdf';
import { localJoinCounts } from '../../src/spatial/localJoinCount.js';
import { hypergeometricUpperTail } from '../../src/spatial/combinatorics.js';
import { knnWeights, weightsFromEdges } from '../../src/spatial/weights.js';
import { expectClose } from '../helpers/expectClose.js';

describe('local join count', () => {
  it('gives each positive pen its positive neighbours and P(X >= BB_i), X ~ Hyp(n-1, n1-1, k)', () => {
    // Row of six, positives 2 and 3: pen 2 has k = 2 neighbours, 1 positive. By hand:
    // X ~ Hyp(5 pens, 1 positive, 2 draws): P(X >= 1) = 1 - C(4,2)/C(5,2) = 1 - 6/10 = 0.4.
    const w = knnWeights(
      [0, 1, 2, 3, 4, 5].map((x) => ({ id: `P${x + 1}`, x, y: 0 })),
      1,
      'binary',
    );
    const l = localJoinCounts(w, [false, true, true, false, false, false]);
    expect(l.map((e) => [e.id, e.bb, e.neighbours])).toEqual([
      ['P2', 1, 2],
      ['P3', 1, 2],
    ]);
    expectClose(l[0]!.p!, 0.4, { rel: 1e-12 }, 'local p pen 2');
  });

  it('matches @stdlib hypergeometric cdf for the upper tail over a grid', () => {
    // Oracle: @stdlib/stats-base-dists-hypergeometric-cdf, P(X >= x) = 1 - cdf(x - 1; N, K, n).
    for (const [N, K, n] of [
      [39, 7, 4],
      [79, 3, 8],
      [20, 10, 5],
      [9, 0, 3],
      [15, 15, 4],
    ] as const) {
      for (let x = 0; x <= Math.min(K, n) + 1; x++) {
        const expected = x === 0 ? 1 : 1 - cdf(x - 1, N, K, n);
        expectClose(
          hypergeometricUpperTail(x, N, K, n),
          expected,
          { rel: 1e-9, abs: 1e-14 },
          `x=${x} N=${N} K=${K} n=${n}`,
        );
      }
    }
  });

  it('gives an isolate a null p-value', () => {
    const w = weightsFromEdges(['a', 'b', 'c'], [[0, 1]], 'binary', 'test');
    const l = localJoinCounts(w, [true, false, true]);
    expect(l.find((e) => e.id === 'c')).toEqual({ id: 'c', bb: 0, neighbours: 0, p: null });
  });
});
