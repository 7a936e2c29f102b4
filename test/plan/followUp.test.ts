import { barnPlanNoteText } from '../../src/report/barnPlanNotes.js';
import { describe, expect, it } from 'vitest';
import { penContacts } from '../../src/domain/layout.js';
import { lazyGreedy, planFollowUp, ringCandidates } from '../../src/plan/index.js';
import { seededRng, type Rng } from '../../src/util/random.js';
import { layout, pensOf, subsets } from './helpers.js';

const barnLayout = layout(2, 6, { empty: ['A5'] });
const pens = pensOf(2, 6, { empty: ['A5'] });
const contacts = penContacts(barnLayout, pens);

describe('follow-up ring', () => {
  it('orders the ring fence line first, then facing, then diagonal, then by distance, and skips empty pens', () => {
    // Positive A3 in a 2 x 6 barn (A5 empty), depth 1 + alley 1: fence A2, A4; facing B3 at
    // distance 2; diagonals B2, B4 at sqrt(5); within 2.5 also A1 (distance 2). By hand.
    const ring = ringCandidates(pens, contacts, [['A3']], 2.5);
    expect(ring.map((c) => [c.penId, c.tier])).toEqual([
      ['A2', 'fence'],
      ['A4', 'fence'],
      ['B3', 'facing'],
      ['B2', 'diagonal'],
      ['B4', 'diagonal'],
      ['A1', 'distance'],
    ]);
    // A5 is empty: never in the ring, though 2 pens from A3.
    expect(ring.some((c) => c.penId === 'A5')).toBe(false);
  });

  it('merges retest, follow-up and routine with precedence retest > follow-up > routine, one rope per pen', () => {
    const plan = planFollowUp({
      pens,
      contacts,
      clusters: [['A3']],
      ringDistance: 0,
      routine: ['A1', 'A4', 'B3', 'B6'],
      retest: ['B3', 'A6', 'A5'],
    });
    expect(plan.ropes).toEqual([
      { penId: 'A1', reason: 'routine' },
      { penId: 'A2', reason: 'follow-up' },
      { penId: 'A4', reason: 'follow-up' }, // routine and ring: follow-up, no extra rope
      { penId: 'A6', reason: 'retest' },
      { penId: 'B2', reason: 'follow-up' },
      { penId: 'B3', reason: 'retest' }, // routine, ring and retest: retest wins
      { penId: 'B4', reason: 'follow-up' },
      { penId: 'B6', reason: 'routine' },
    ]);
    expect(plan.notes).toEqual([{ kind: 'retest-not-in-use', penId: 'A5', status: 'empty' }]);
    expect(plan.notes.map(barnPlanNoteText)).toEqual([expect.stringContaining('Pen A5 is empty')]);
  });

  it('takes the first ring pens in priority order when extra ropes are limited and no model is given', () => {
    const plan = planFollowUp({
      pens,
      contacts,
      clusters: [['A3']],
      ringDistance: 0,
      routine: ['A4'],
      retest: [],
      maxExtraRopes: 2,
    });
    expect(plan.added).toEqual(['A2', 'B3']); // A4 already routine (free), then A2, then facing B3
    expect(plan.ropes.filter((r) => r.reason === 'follow-up').map((r) => r.penId)).toEqual(['A2', 'A4', 'B3']);
  });
});

/**
 * A detection model that is monotone submodular by construction: scenarios s with weights w_s,
 * each a set of infected pens; P(detect S) = sum_s w_s [1 - (1 - Se)^{|S n I_s|}], a non-negative
 * sum of concave functions of a modular count (spread-model form, by hand; fixed spatial sampling
 * as in Cochran 1977, Sampling Techniques ch. 8).
 */
function scenarioModel(rng: Rng, candidates: readonly string[], scenarios: number, se: number) {
  const sets = Array.from({ length: scenarios }, () => new Set(candidates.filter(() => rng() < 0.35)));
  const weights = sets.map(() => rng());
  const total = weights.reduce((a, b) => a + b, 0);
  return (ids: readonly string[]) =>
    sets.reduce((p, set, s) => p + (weights[s]! / total) * (1 - (1 - se) ** ids.filter((id) => set.has(id)).length), 0);
}

describe('greedy follow-up choice with a detection model', () => {
  it('is never below (1 - 1/e) of the brute-force optimum and usually equals it', () => {
    const rng = seededRng(1978);
    const candidates = ['A2', 'A4', 'B3', 'B2', 'B4', 'A1', 'B1', 'B5'];
    let equal = 0;
    let trials = 0;
    for (let trial = 0; trial < 80; trial++) {
      const f = scenarioModel(rng, candidates, 4 + Math.floor(rng() * 4), [1, 0.8, 0.5][trial % 3]!);
      const base = trial % 2 === 0 ? [] : ['A6'];
      const k = 1 + (trial % 3);
      const chosen = lazyGreedy(f, base, candidates, k);
      expect(chosen).toHaveLength(k);
      let best = -Infinity;
      for (const set of subsets(candidates, k)) best = Math.max(best, f([...base, ...set]));
      const start = f(base);
      const gain = f([...base, ...chosen]) - start;
      // Nemhauser, Wolsey & Fisher (1978): greedy gain >= (1 - 1/e) optimal gain.
      expect(gain).toBeGreaterThanOrEqual((1 - 1 / Math.E) * (best - start) - 1e-12);
      trials++;
      if (Math.abs(start + gain - best) <= 1e-12) equal++;
    }
    expect(equal / trials).toBeGreaterThanOrEqual(0.8);
  });

  it('chooses the same pens as plain (non-lazy) greedy', () => {
    const rng = seededRng(42);
    const candidates = ['A1', 'A2', 'A4', 'A6', 'B1', 'B2', 'B3', 'B4', 'B5', 'B6'];
    for (let trial = 0; trial < 30; trial++) {
      const f = scenarioModel(rng, candidates, 6, 0.7);
      const plain: string[] = [];
      for (let step = 0; step < 4; step++) {
        let bestId = '';
        let bestValue = -Infinity;
        for (const id of candidates) {
          if (plain.includes(id)) continue;
          const value = f([...plain, id]);
          if (value > bestValue + 1e-15) {
            bestId = id;
            bestValue = value;
          }
        }
        plain.push(bestId);
      }
      expect(lazyGreedy(f, [], candidates, 4)).toEqual(plain);
    }
  });

  it('adds the ring pens that raise detection most when a model is given', () => {
    // Model: infection sits in B3 or in A2 (equal chance), ropes perfect; the best single extra
    // rope is therefore B3 or A2, never A4 (by hand). Routine ropes: none.
    const f = (ids: readonly string[]) => 0.5 * Number(ids.includes('B3')) + 0.5 * Number(ids.includes('A2'));
    const plan = planFollowUp({
      pens,
      contacts,
      clusters: [['A3']],
      ringDistance: 0,
      routine: [],
      retest: [],
      maxExtraRopes: 2,
      detectSet: f,
    });
    expect([...plan.added].sort()).toEqual(['A2', 'B3']);
    expect(plan.detection).toBe(1);
  });
});
