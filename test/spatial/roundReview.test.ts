import { describe, expect, it } from 'vitest';
import type { BarnLayout } from '../../src/domain/layout.js';
import { analyseBarnRound, analyseSiteRound, type RoundPen } from '../../src/spatial/roundReview.js';
import { expectClose } from '../helpers/expectClose.js';

const layout: BarnLayout = {
  rows: 2,
  pensPerRow: 20,
  numbering: 'per-row',
  rowLabels: ['A', 'B'],
  padDigits: 0,
  penWidth: 1,
  penDepth: 1,
  alleyWidth: 0.5,
  gapsAfter: [],
  gapWidth: 1,
  empty: ['A13'],
  outOfUse: ['B20'],
};

/** Ropes every third pen in pairs across the alley: A1 B2, A4 B5, ..., A13 (empty) B14, ..., A19 B20 (out of use). */
function systematicRound(positives: Set<string>): RoundPen[] {
  const pens: RoundPen[] = [];
  for (let p = 1; p <= 20; p += 3)
    pens.push(...['A', 'B'].map((side) => ({ id: `${side}${p + (side === 'B' ? 1 : 0)}`, positive: false, load: 0 })));
  return pens.map((pen) =>
    positives.has(pen.id)
      ? { ...pen, positive: true, ct: 28, load: 12, resultClass: 'positive' }
      : { ...pen, resultClass: 'negative' },
  );
}

/** Fails on any NaN, Infinity or undefined anywhere in a report. */
function assertClean(value: unknown, path = 'report'): void {
  if (value === undefined) throw new Error(`${path} is undefined`);
  if (typeof value === 'number' && !Number.isFinite(value)) throw new Error(`${path} is ${value}`);
  if (Array.isArray(value)) value.forEach((v, i) => assertClean(v, `${path}[${i}]`));
  else if (value && typeof value === 'object')
    for (const [k, v] of Object.entries(value)) assertClean(v, `${path}.${k}`);
}

describe('barn-round and site-round analysis', () => {
  it('reports every statistic for a barn-round as clean JSON and leaves empty pens out', () => {
    const sampled = systematicRound(new Set(['A1', 'B2', 'A4', 'B5']));
    const r = analyseBarnRound({
      barn: 'N1',
      layout,
      sampled,
      earlierPositive: ['A1'],
      options: { seed: 7, permutations: 199 },
    });
    assertClean(r);
    expect(JSON.parse(JSON.stringify(r))).toEqual(r);
    expect(r.excluded.map((e) => e.id)).toEqual(['A13', 'B20']);
    expect(r.n).toBe(sampled.length - 2);
    // The default (2 nearest ropes) links ropes although no two sampled pens share a fence.
    expect(r.weights.isolates).toEqual([]);
    expect(r.joinCount!.bb).toBeGreaterThan(0);
    expect(r.clusters[0]!.pens).toEqual(['A1', 'B2', 'A4', 'B5']);
    expect(r.clusters[0]!.newPens).toEqual(['B2', 'A4', 'B5']);
    // By hand: rope spacing = median second-nearest rope distance = the diagonal to the next pair,
    // sqrt(2^2 + 1.5^2) = 2.5, so the threshold is max(2.5, 2.5). From the earlier positive A1 (0.5, 0.5):
    // B2 (1.5, 2) is 1.80 away (adjacent), A4 3 and B5 4.27 (distant), so the round is a distant new focus.
    expectClose(r.spread.thresholds.adjacentDistance, 2.5, { rel: 1e-12 }, 'adjacent threshold');
    expect(r.spread.newPositives.map((p) => p.kind)).toEqual(['adjacent', 'distant', 'distant']);
    expect(r.spread.pattern).toBe('distant-new-focus');
    // Detection under contagious spread needs the site's spread model: the round review leaves it to the caller.
    expect(r.detection).toBeNull();
    expect(r.pens.find((p) => p.id === 'A1')!.localBB).not.toBeNull();
  });

  it('gives the same report for the same seed', () => {
    const sampled = systematicRound(new Set(['A7', 'B8']));
    const input = {
      barn: 'N1',
      layout,
      sampled,
      options: { seed: 3, permutations: 99 },
    };
    expect(analyseBarnRound(input)).toEqual(analyseBarnRound(input));
  });

  it('reports a round without positives with null z and Moran I and no clusters, never NaN', () => {
    const r = analyseBarnRound({
      barn: 'N1',
      layout,
      sampled: systematicRound(new Set()),
      options: { seed: 1, permutations: 99 },
    });
    assertClean(r);
    expect(r.joinCount!.zBB).toBeNull();
    expect(r.moran!.I).toBeNull();
    expect(r.clusters).toEqual([]);
    expect(r.spread.pattern).toBe('none');
    expect(r.scan!.mostLikely).toBeNull();
  });

  it('uses the hand-derived values when asked for fence contacts on a fully roped row', () => {
    // Row of six pens roped, positives 2 and 3, fence weights: BB = 1, E(BB) = 1/3, exact p = 5/15
    // (Cliff & Ord 1981, Spatial Processes (non-free sampling moments); exact p by enumeration of the C(6,2) placements).
    const row: BarnLayout = { ...layout, rows: 1, pensPerRow: 6, rowLabels: ['A'], empty: [], outOfUse: [] };
    const sampled = [1, 2, 3, 4, 5, 6].map((p) => ({
      id: `A${p}`,
      positive: p === 2 || p === 3,
      load: p === 2 || p === 3 ? 1 : 0,
    }));
    const r = analyseBarnRound({
      barn: 'R',
      layout: row,
      sampled,
      options: { seed: 1, weights: { kind: 'contact', convention: 'fence' } },
    });
    expect(r.joinCount!.bb).toBe(1);
    expectClose(r.joinCount!.expectedBB, 1 / 3, { rel: 1e-12 }, 'E(BB)');
    expectClose(r.joinCount!.pPermutation, 5 / 15, { rel: 1e-12 }, 'exact p');
    expectClose(r.moran!.I!, 0.2, { rel: 1e-12 }, "Moran's I");
    expectClose(r.pens[1]!.giStar!, 1.581139, { rel: 1e-6 }, 'Gi* pen 2');
  });

  it('permutes within barns on a site and measures spread across barns through the offsets', () => {
    const a = {
      barn: 'N1',
      layout,
      offset: { x: 0, y: 0 },
      sampled: systematicRound(new Set(['A1', 'B2'])),
      earlierPositive: [],
    };
    const b = {
      barn: 'N2',
      layout: { ...layout, empty: [], outOfUse: [] },
      offset: { x: 0, y: 10 },
      sampled: systematicRound(new Set(['A1'])),
      earlierPositive: ['A4'],
    };
    const r = analyseSiteRound({ site: 'S', barns: [a, b], options: { seed: 5, permutations: 199 } });
    assertClean(r);
    expect(r.barns.map((x) => x.barn)).toEqual(['N1', 'N2']);
    expect(r.joinCount!.inference.stratified).toBe(true);
    // Barn N1's new positives A1 (0.5, 0.5) and B2 (1.5, 2) are measured to N2's earlier positive
    // A4 at (3.5, 0.5 + 10) through the offset: sqrt(9 + 100) and sqrt(4 + 72.25) (by hand).
    const n1 = r.spread.newPositives.filter((p) => p.barn === 'N1');
    expect(n1.map((p) => p.sameBarn)).toEqual([false, false]);
    expectClose(n1[0]!.nearestEarlierDistance!, Math.sqrt(109), { rel: 1e-12 }, 'N1 A1 to N2 A4');
    expectClose(n1[1]!.nearestEarlierDistance!, Math.sqrt(76.25), { rel: 1e-12 }, 'N1 B2 to N2 A4');
    expect(r.spread.pattern).toBe('distant-new-focus');
    expect(() => analyseSiteRound({ site: 'S', barns: [a, a], options: { seed: 5 } })).toThrow(/unique/);
  });

  it('rejects a sampled pen that is not in the layout', () => {
    expect(() =>
      analyseBarnRound({ barn: 'N1', layout, sampled: [{ id: 'C1', positive: true, load: 1 }], options: { seed: 1 } }),
    ).toThrow(/C1/);
  });
});
