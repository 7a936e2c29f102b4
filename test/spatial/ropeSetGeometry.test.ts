import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { BarnLayout } from '../../src/domain/layout.js';
import { joinCountTest, joinGraph, stratifiedJoinCountMoments } from '../../src/spatial/joinCount.js';
import { GeometryCache } from '../../src/spatial/ropeSetGeometry.js';
import {
  analyseBarnRound,
  analyseSiteRound,
  type RoundPen,
  type SiteRoundInput,
  type WeightChoice,
} from '../../src/spatial/roundReview.js';
import { bernoulliScan } from '../../src/spatial/scan.js';
import { defaultWeights, weightConstants, type SpatialWeights } from '../../src/spatial/weights.js';
import { seededRng } from '../../src/util/random.js';

const layout: BarnLayout = {
  rows: 2,
  pensPerRow: 24,
  numbering: 'continuous',
  rowLabels: ['A', 'B'],
  padDigits: 0,
  penWidth: 1,
  penDepth: 1,
  alleyWidth: 1.5,
  gapsAfter: [12],
  gapWidth: 1,
  empty: ['5', '30'],
  outOfUse: ['44'],
};

/** The pens of a rotating systematic layer: every `every`-th position from `phase`, alternating rows. */
function ropeSet(phase: number, every: number): string[] {
  const ids: string[] = [];
  for (let position = phase, k = 0; position < 24; position += every, k++)
    ids.push(String((k % 2) * 24 + position + 1));
  return ids;
}

/** Unfrozen copies of weights: nothing derived from them is kept. */
function thawed(w: SpatialWeights): SpatialWeights {
  return {
    ...w,
    ids: [...w.ids],
    offsets: w.offsets.slice(),
    neighbours: w.neighbours.slice(),
    weights: w.weights.slice(),
  };
}

const barnRound = fc.record({
  phase: fc.integer({ min: 0, max: 3 }),
  every: fc.constantFrom(3, 4, 12, 30),
  reversed: fc.boolean(),
  flags: fc.array(fc.constantFrom('positive', 'negative', 'invalid'), { minLength: 24, maxLength: 24 }),
});

const choices: WeightChoice[] = [
  { kind: 'default' },
  { kind: 'contact', convention: 'queen' },
  { kind: 'knn', k: 1 },
  { kind: 'band', band: 4, power: 1 },
];

interface BarnRoundShape {
  phase: number;
  every: number;
  reversed: boolean;
  flags: readonly string[];
}

function barnInput(barn: string, round: BarnRoundShape, y: number) {
  const ids = ropeSet(round.phase, round.every);
  const sampled: RoundPen[] = (round.reversed ? [...ids].reverse() : ids).map((id, k) => {
    const flag = round.flags[k]!;
    return {
      id,
      positive: flag === 'positive',
      resultClass: flag,
      ct: flag === 'positive' ? 25 + k : null,
      load: flag === 'positive' ? 15 - k / 2 : 0,
    };
  });
  const earlierPositive = sampled.filter((pen) => pen.positive).map((pen) => String(((Number(pen.id) + 1) % 48) + 1));
  return { barn, layout, offset: { x: 0, y }, sampled, earlierPositive };
}

describe('rope-set geometry made once', () => {
  it('gives every site-round the same report through one cache as without it, as the rope sets change', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(barnRound, barnRound), { minLength: 1, maxLength: 6 }),
        fc.constantFrom(...choices),
        fc.constantFrom('binary' as const, 'row' as const),
        fc.integer({ min: 0, max: 1000 }),
        (rounds, weights, style, seed) => {
          const cache = new GeometryCache();
          rounds.forEach(([first, second], index) => {
            const input: SiteRoundInput = {
              site: 'S',
              barns: [barnInput('N1', first, 0), barnInput('N2', second, 8)],
              options: { seed: seed + index, permutations: 49, weights, style, exactLimit: 200 },
            };
            const cached = analyseSiteRound({ ...input, geometry: cache });
            const fresh = analyseSiteRound(input);
            expect(JSON.stringify(cached)).toBe(JSON.stringify(fresh));
          });
        },
      ),
      { numRuns: 60 },
    );
  });

  it('gives a barn-round the same report through a cache used before for other rope sets', () => {
    const cache = new GeometryCache();
    const rounds = [0, 1, 2, 0, 1].map((phase) =>
      barnInput('N1', { phase, every: 4, reversed: phase === 1, flags: Array(24).fill('negative') }, 0),
    );
    rounds[3]!.sampled[2] = { ...rounds[3]!.sampled[2]!, positive: true, resultClass: 'positive', load: 9 };
    rounds[3]!.sampled[3] = { ...rounds[3]!.sampled[3]!, positive: true, resultClass: 'positive', load: 7 };
    for (const round of rounds) {
      const options = { seed: 11, permutations: 99 };
      expect(analyseBarnRound({ ...round, options, geometry: cache })).toEqual(analyseBarnRound({ ...round, options }));
    }
  });

  it('hands out one geometry per layout and pens in order, and another when either differs', () => {
    const cache = new GeometryCache();
    const ids = ropeSet(1, 4);
    const geometry = cache.ropeSet(layout, ids);
    expect(cache.ropeSet(layout, [...ids])).toBe(geometry);
    expect(cache.ropeSet(layout, [...ids].reverse())).not.toBe(geometry);
    expect(cache.ropeSet(layout, ids.slice(1))).not.toBe(geometry);
    // Another layout object, however alike, is another barn.
    expect(cache.ropeSet({ ...layout }, ids)).not.toBe(geometry);
    expect(Object.isFrozen(geometry.points)).toBe(true);
    expect(geometry.weights({ kind: 'default' }, 'binary')).toBe(geometry.weights({ kind: 'default' }, 'binary'));
    expect(geometry.weights({ kind: 'default' }, 'row')).not.toBe(geometry.weights({ kind: 'default' }, 'binary'));
    expect(() => cache.ropeSet(layout, ['99'])).toThrow(/99/);
  });
});

describe('structures derived from frozen weights and points', () => {
  const points = ropeSet(0, 3).map((id, k) => ({ id, x: k * 3 + (k % 2) * 0.5, y: (k % 2) * 2.5 }));
  const w = defaultWeights(points, 'binary');

  it('are the same kept as made afresh', () => {
    expect(Object.isFrozen(w)).toBe(true);
    expect(weightConstants(w)).toEqual(weightConstants(thawed(w)));
    expect(weightConstants(w)).toBe(weightConstants(w));
    expect(joinGraph(w)).toEqual(joinGraph(thawed(w)));
    expect(joinGraph(w)).toBe(joinGraph(w));
    const strata = points.map((_, i) => (i < 3 ? 0 : 1));
    const positive = points.map((_, i) => i % 3 === 0);
    expect(stratifiedJoinCountMoments(w, strata, positive)).toEqual(
      stratifiedJoinCountMoments(thawed(w), strata, positive),
    );
    for (const exactLimit of [10, 1e6]) {
      const options = { permutations: 99, exactLimit };
      const kept = joinCountTest(w, positive, { ...options, strata: Object.freeze([...strata]), rng: seededRng(4) });
      expect(kept).toEqual(joinCountTest(thawed(w), positive, { ...options, strata, rng: seededRng(4) }));
      // Other strata over the same frozen weights are grouped afresh.
      const other = points.map((_, i) => i % 2);
      expect(joinCountTest(w, positive, { ...options, strata: Object.freeze(other), rng: seededRng(4) })).toEqual(
        joinCountTest(thawed(w), positive, { ...options, strata: other, rng: seededRng(4) }),
      );
    }
  });

  it('give the scan the same windows for frozen points as for a copy, whatever the limits', () => {
    const frozen = Object.freeze(points.map((p) => Object.freeze({ ...p })));
    const positive = points.map((_, i) => i === 2 || i === 3);
    for (const limits of [{}, { maxFraction: 0.25 }, { maxRadius: 4 }, {}]) {
      const options = { permutations: 99, ...limits };
      expect(bernoulliScan(frozen, positive, { ...options, rng: seededRng(9) })).toEqual(
        bernoulliScan(
          points.map((p) => ({ ...p })),
          positive,
          { ...options, rng: seededRng(9) },
        ),
      );
    }
  });
});
