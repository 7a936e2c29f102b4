import { describe, expect, it } from 'vitest';
import { linkClusters } from '../../src/spatial/clusters.js';
import { expectClose } from '../helpers/expectClose.js';

describe('cluster listing', () => {
  it('links positive pens by single linkage and gives extent, Ct and new versus earlier pens', () => {
    // By hand: A1-A2-A3 chain at unit steps (A1 to A3 is 2 apart but linked through A2); B10 alone.
    const c = linkClusters(
      [
        { id: 'A3', x: 2.5, y: 0.5, ct: 30 },
        { id: 'A1', x: 0.5, y: 0.5, ct: 24 },
        { id: 'A2', x: 1.5, y: 0.5, ct: 27 },
        { id: 'B10', x: 9.5, y: 2, ct: null },
      ],
      1,
      new Set(['A1']),
    );
    expect(c.map((k) => k.pens)).toEqual([['A1', 'A2', 'A3'], ['B10']]);
    expect(c[0]).toMatchObject({
      size: 3,
      alleyLength: 2,
      minCt: 24,
      newPens: ['A2', 'A3'],
      earlierPositivePens: ['A1'],
    });
    expectClose(c[0]!.meanCt!, 27, { rel: 1e-12 }, 'mean Ct (24+27+30)/3');
    expect(c[1]).toMatchObject({ meanCt: null, minCt: null, alleyLength: 0 });
  });

  it('returns no clusters when there is no positive pen and rejects a bad distance', () => {
    expect(linkClusters([], 1)).toEqual([]);
    expect(() => linkClusters([], 0)).toThrow(/linkDistance/);
  });
});
