import { barnPlanNoteText } from '../../src/report/barnPlanNotes.js';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { Pen } from '../../src/domain/layout.js';
import { coverageRounds, placementDistances, placeSystematic } from '../../src/plan/index.js';
import { expectClose } from '../helpers/expectClose.js';
import { pensOf } from './helpers.js';

const byPosition = (pens: readonly Pen[], ids: readonly string[]) =>
  ids.map((id) => pens.find((p) => p.id === id)!).sort((a, b) => a.position - b.position || a.row - b.row);

function unionOverRounds(pens: readonly Pen[], ropes: number, rounds: number, from = 0): Set<string> {
  const covered = new Set<string>();
  for (let r = from; r < from + rounds; r++)
    for (const id of placeSystematic(pens, { ropes, roundIndex: r }).penIds) covered.add(id);
  return covered;
}

describe('systematic placement', () => {
  const barn = pensOf(2, 20);

  it('spaces 7 ropes equally along a 2 x 20 barn, alternating sides, about every sixth pen on each side', () => {
    for (let round = 0; round < 6; round++) {
      const ropes = byPosition(barn, placeSystematic(barn, { ropes: 7, roundIndex: round }).penIds);
      expect(ropes).toHaveLength(7);
      // Systematic interval along the barn k = P / n = 20 / 7 = 2.86 positions, so consecutive
      // ropes are floor(k) = 2 or ceil(k) = 3 positions apart (Cochran 1977, ch. 8, 1-in-k sampling
      // with a fractional interval); on one side 2k = 5.7, i.e. 5 or 6 pens apart.
      for (let i = 1; i < ropes.length; i++) {
        expect([2, 3]).toContain(ropes[i]!.position - ropes[i - 1]!.position);
        expect(ropes[i]!.row).not.toBe(ropes[i - 1]!.row); // alternating sides of the alley
      }
      for (const row of [0, 1]) {
        const side = ropes.filter((p) => p.row === row);
        for (let i = 1; i < side.length; i++) expect([5, 6]).toContain(side[i]!.position - side[i - 1]!.position);
      }
    }
  });

  it('measures covering radius and mean distance as the largest and mean distance to the nearest rope', () => {
    // By hand: one row of 6 pens, centres x = 0.5..5.5, ropes in pens 2 and 5 (x = 1.5, 4.5).
    // Nearest-rope distances 1, 0, 1, 1, 0, 1: radius 1, mean 4/6.
    const row = pensOf(1, 6);
    const d = placementDistances(row, ['A2', 'A5']);
    expectClose(d.coveringRadius!, 1, { abs: 1e-12 }, 'row of 6, ropes A2 A5, radius');
    expectClose(d.meanDistance!, 4 / 6, { rel: 1e-12 }, 'row of 6, ropes A2 A5, mean');
    expect(placementDistances(row, [])).toEqual({ coveringRadius: null, meanDistance: null });
  });

  it('starts the rotation at the phase with the smallest covering radius', () => {
    const { cycleLength } = coverageRounds(barn, 7);
    const first = placeSystematic(barn, { ropes: 7, roundIndex: 0 });
    for (let r = 1; r < cycleLength; r++) {
      const other = placeSystematic(barn, { ropes: 7, roundIndex: r });
      expect(first.coveringRadius!).toBeLessThanOrEqual(other.coveringRadius! + 1e-9);
      if (Math.abs(first.coveringRadius! - other.coveringRadius!) < 1e-9) {
        expect(first.meanDistance!).toBeLessThanOrEqual(other.meanDistance! + 1e-9);
      }
    }
    // Hand check on a 1 x 6 row with 2 ropes: phases put ropes at (1,4), (2,5), (3,6) (pen
    // numbers); (2,5) has radius 1, the others 2, so the rotation starts there.
    expect(placeSystematic(pensOf(1, 6), { ropes: 2, roundIndex: 0 }).penIds).toEqual(['A2', 'A5']);
  });

  it('moves the placement every round and covers every in-use pen within the stated number of rounds', () => {
    const layouts: [string, Pen[], number][] = [
      ['1 x 12', pensOf(1, 12), 3],
      ['2 x 20', barn, 7],
      ['2 x 20, one rope', barn, 1],
      ['2 x 20, every pen', barn, 40],
      ['4 x 10', pensOf(4, 10), 6],
      ['2 x 15 with gaps', pensOf(2, 15, { gapsAfter: [5, 10], gapWidth: 2 }), 4],
      ['3 x 9', pensOf(3, 9), 5],
      ['2 x 20 with empties', pensOf(2, 20, { empty: ['A1', 'A2', 'A3', 'B7', 'B8'], outOfUse: ['A10', 'B10'] }), 6],
    ];
    for (const [label, pens, ropes] of layouts) {
      const inUse = pens.filter((p) => p.status === 'in-use').length;
      for (const from of [0, 3]) {
        const stated = coverageRounds(pens, ropes, from);
        // Pigeonhole, by hand: n ropes a round cannot cover N pens in fewer than ceil(N / n) rounds.
        expect(stated.rounds, label).toBeGreaterThanOrEqual(Math.ceil(inUse / ropes));
        expect(stated.rounds, label).toBeLessThanOrEqual(stated.cycleLength);
        expect(unionOverRounds(pens, ropes, stated.rounds, from).size, label).toBe(inUse);
        if (stated.rounds > 1)
          expect(unionOverRounds(pens, ropes, stated.rounds - 1, from).size, label).toBeLessThan(inUse);
        expect(stated.inUsePens, label).toBe(inUse);
        expect(barnPlanNoteText({ kind: 'coverage', ropes, ...stated })).toContain(`after ${stated.rounds} round`);
      }
      if (ropes < inUse) {
        const a = placeSystematic(pens, { ropes, roundIndex: 0 }).penIds;
        const b = placeSystematic(pens, { ropes, roundIndex: 1 }).penIds;
        expect(a, label).not.toEqual(b);
      }
    }
    // The full 2 x 20 barn at 7 ropes: 6 rounds, against the ideal ceil(40 / 7) = 6.
    expect(coverageRounds(barn, 7).rounds).toBe(6);
  });

  it('places every round as a search afresh would, with the start phase kept between calls', () => {
    const barns = [
      barn,
      pensOf(2, 20, { empty: ['A1', 'A2', 'A3', 'B7', 'B8'], outOfUse: ['A10', 'B10'] }),
      pensOf(4, 10),
      pensOf(2, 15, { gapsAfter: [5, 10], gapWidth: 2 }),
    ];
    for (const pens of barns) {
      // Rope counts interleaved on one array, each against a copy no call has seen.
      for (const roundIndex of [0, 1, 5])
        for (const ropes of [7, 3, 12, 1, 7]) {
          const fresh = pens.map((pen) => ({ ...pen }));
          expect(placeSystematic(pens, { ropes, roundIndex })).toEqual(placeSystematic(fresh, { ropes, roundIndex }));
          expect(coverageRounds(pens, ropes, roundIndex)).toEqual(
            coverageRounds(
              pens.map((pen) => ({ ...pen })),
              ropes,
              roundIndex,
            ),
          );
        }
    }
  });

  it('alternates the two sides of each alley in a 4-row barn', () => {
    const pens = pensOf(4, 12);
    const placed = byPosition(pens, placeSystematic(pens, { ropes: 8, roundIndex: 0 }).penIds);
    for (const alley of [
      [0, 1],
      [2, 3],
    ]) {
      const ropes = placed.filter((p) => alley.includes(p.row));
      expect(ropes.length).toBe(4);
      for (let i = 1; i < ropes.length; i++) expect(ropes[i]!.row).not.toBe(ropes[i - 1]!.row);
    }
  });

  it('never chooses an empty or out-of-use pen and never two ropes in one pen', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 4 }),
        fc.integer({ min: 1, max: 16 }),
        fc.array(fc.boolean(), { minLength: 64, maxLength: 64 }),
        fc.nat(),
        fc.nat({ max: 50 }),
        (rows, perRow, closed, ropeSeed, round) => {
          const all = pensOf(rows, perRow);
          const shut = all.filter((_, i) => closed[i]).map((p) => p.id);
          const pens = pensOf(rows, perRow, {
            empty: shut.filter((_, i) => i % 2 === 0),
            outOfUse: shut.filter((_, i) => i % 2 === 1),
          });
          const inUse = pens.filter((p) => p.status === 'in-use').length;
          const ropes = inUse === 0 ? 0 : 1 + (ropeSeed % inUse);
          const placed = placeSystematic(pens, { ropes, roundIndex: round });
          expect(new Set(placed.penIds).size).toBe(ropes);
          // Only ropes aimed at an empty or out-of-use pen move (two-pass snapping).
          const offTarget = placed.ropes.filter(
            (r) => pens.find((p) => p.row === r.targetRow && p.position === r.targetPosition)!.status !== 'in-use',
          );
          expect(placed.ropes.filter((r) => r.snapped)).toEqual(offTarget);
          for (const id of placed.penIds) expect(pens.find((p) => p.id === id)!.status).toBe('in-use');
          if (ropes > 0) expect(unionOverRounds(pens, ropes, coverageRounds(pens, ropes).rounds).size).toBe(inUse);
        },
      ),
      { numRuns: 150, seed: 20260301 },
    );
  });

  it('notes when the interval shares a factor with a barn periodicity such as every fourth pen', () => {
    // 10 ropes on 2 x 20: rope k at position 2k, so row A ropes at 0, 4, 8, 12, 16: all the same
    // phase of a period of 4 (by hand).
    const notes = placeSystematic(barn, { ropes: 10, roundIndex: 0, period: 4 }).notes.map(barnPlanNoteText);
    expect(notes.some((n) => n.includes('only 1 of the 4 positions'))).toBe(true);
    // 7 ropes: row B ropes 6 pens apart (gcd(6, 4) = 2, flagged), row A 5 or 6 apart (not constant).
    const seven = placeSystematic(barn, { ropes: 7, roundIndex: 0, period: 4 })
      .notes.map(barnPlanNoteText)
      .filter((n) => n.includes('period'));
    expect(seven).toEqual([expect.stringContaining('Row B: ropes every 6 pens share the factor 2')]);
    // A period of 5 shares no factor with 6: nothing to note.
    expect(
      placeSystematic(barn, { ropes: 7, roundIndex: 0, period: 5 })
        .notes.map(barnPlanNoteText)
        .filter((n) => n.includes('period')),
    ).toEqual([]);
  });

  it('rejects more ropes than in-use pens with the shared error grammar', () => {
    const pens = pensOf(1, 5, { empty: ['A1'] });
    expect(() => placeSystematic(pens, { ropes: 5, roundIndex: 0 })).toThrow(
      '`ropes` must be an integer in [0, in-use pens], got 5',
    );
    expect(() => placeSystematic(pens, { ropes: 2, roundIndex: -1 })).toThrow(RangeError);
    expect(() => placeSystematic(pens.slice(1), { ropes: 2, roundIndex: 0 })).toThrow(/every pen/);
  });
});
