import { describe, expect, it } from 'vitest';
import { inUsePens, type BarnLayout } from '../../src/domain/layout.js';
import {
  contactWeights,
  denseWeights,
  distanceBandWeights,
  knnWeights,
  listWeights,
  weightConstants,
} from '../../src/spatial/weights.js';
import { expectClose } from '../helpers/expectClose.js';
import { expandLayout } from '../../src/domain/layout.js';

const barn: BarnLayout = {
  rows: 2,
  pensPerRow: 4,
  numbering: 'per-row',
  rowLabels: ['A', 'B'],
  padDigits: 0,
  penWidth: 1,
  penDepth: 1,
  alleyWidth: 0.5,
  gapsAfter: [],
  gapWidth: 1,
  empty: [],
  outOfUse: [],
};
const all = ['A1', 'A2', 'A3', 'A4', 'B1', 'B2', 'B3', 'B4'];
const row6 = [0, 1, 2, 3, 4, 5].map((x) => ({ id: `P${x + 1}`, x, y: 0 }));

describe('spatial weights', () => {
  it('builds fence, rook and queen contacts from the barn layout', () => {
    // 2 x 4 barn: fence 3 per row = 6 joins; facing 4; diagonals 2 per gap between positions = 6.
    expect(weightConstants(contactWeights(barn, all, 'fence', 'binary')).s0).toBe(12);
    expect(weightConstants(contactWeights(barn, all, 'rook', 'binary')).s0).toBe(20);
    expect(weightConstants(contactWeights(barn, all, 'queen', 'binary')).s0).toBe(32);
  });

  it('keeps only joins between sampled pens and reports pens left without neighbours', () => {
    const w = contactWeights(barn, ['A1', 'A3', 'B2'], 'fence', 'binary');
    expect(w.isolates).toEqual(['A1', 'A3', 'B2']);
    const row = contactWeights(barn, ['A1', 'A3', 'B2'], 'fence', 'row');
    // Row-standardising isolates must not divide by zero.
    expect([...row.weights].every(Number.isFinite)).toBe(true);
    expect(weightConstants(row).s0).toBe(0);
  });

  it('drops empty and out-of-use pens before weights are built', () => {
    const pens = expandLayout({ ...barn, empty: ['A2'], outOfUse: ['B4'] });
    expect(inUsePens(pens).map((p) => p.id)).toEqual(['A1', 'A3', 'A4', 'B1', 'B2', 'B3']);
  });

  it('row-standardises each row to sum 1', () => {
    const w = contactWeights(barn, all, 'queen', 'row');
    const dense = denseWeights(w);
    for (const row of dense)
      expectClose(
        row.reduce((s, v) => s + v, 0),
        1,
        { abs: 1e-12 },
        'row sum',
      );
  });

  it('symmetrises explicit neighbour lists and rejects unknown ids', () => {
    const w = listWeights(['a', 'b', 'c'], { a: ['b'] }, 'binary');
    expect(denseWeights(w)).toEqual([
      [0, 1, 0],
      [1, 0, 0],
      [0, 0, 0],
    ]);
    expect(w.isolates).toEqual(['c']);
    expect(() => listWeights(['a', 'b'], { a: ['z'] }, 'binary')).toThrow(/z/);
  });

  it('links k nearest pens by union and includes ties at the k-th distance', () => {
    // Row of 6 at unit spacing, k = 1: inner pens tie left and right at distance 1, so all fence joins appear.
    const w = knnWeights(row6, 1, 'binary');
    expect(weightConstants(w).s0).toBe(10);
  });

  it('leaves no isolate in a systematic sample at a band of its nearest-neighbour spacing', () => {
    // Every sixth pen on alternating sides of a 2 x 30 barn: a rope at x = 0.5, 6.5, 12.5 ... in row A
    // and x = 3.5, 9.5, ... in row B; nearest rope 3 along and 1.5 across, sqrt(9 + 2.25) = 3.354 (hand).
    const sampled = [];
    for (let i = 0; i < 10; i++) sampled.push({ id: `S${i}`, x: 0.5 + 3 * i, y: i % 2 === 0 ? 0.5 : 2 });
    const band = Math.sqrt(9 + 2.25);
    expect(distanceBandWeights(sampled, band, 'binary').isolates).toEqual([]);
    // Just under that spacing every rope is alone (by hand: the nearest rope is 3.354 away).
    expect(distanceBandWeights(sampled, band * 0.99, 'binary').isolates).toHaveLength(10);
  });

  it('computes S0, S1, S2 for a row of six as by hand', () => {
    // Fence row of 6: S0 = 2 x 5 joins = 10; S1 = 1/2 sum (2)^2 over 10 ordered pairs = 20;
    // S2 = sum (2 deg_i)^2 = 4 (1+4+4+4+4+1) = 72 (by hand).
    const c = weightConstants(knnWeights(row6, 1, 'binary'));
    expect(c).toEqual({ s0: 10, s1: 20, s2: 72 });
  });
});
