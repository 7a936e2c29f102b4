import { describe, expect, it } from 'vitest';
import type { BarnLayout } from '../../src/domain/layout.js';
import { seededRng } from '../../src/util/random.js';
import {
  compareWithRandomPlacement,
  detectionProbability,
  simulateOutbreaks,
  type Outbreaks,
} from '../../src/spatial/spreadDetection.js';
import { hypergeometricInversion } from '../../src/stats/hypergeometricDraw.js';
import { logChoose } from '../../src/spatial/combinatorics.js';
import { contactWeights } from '../../src/spatial/weights.js';
import { expandLayout } from '../../src/domain/layout.js';
import { expectClose } from '../helpers/expectClose.js';

const barn = (pensPerRow: number): BarnLayout => ({
  rows: 2,
  pensPerRow,
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
});
const idsOf = (layout: BarnLayout) => expandLayout(layout).map((p) => p.id);

/** Cameron & Baldock 1998, Prev Vet Med 34:1-17 (hypergeometric form), computed inline: 1 - C(N-d, n) / C(N, n). */
const hypergeometricDetection = (N: number, d: number, n: number) =>
  1 - Math.exp(logChoose(N - d, n) - logChoose(N, n));

describe('spatially aware detection by simulated outbreaks', () => {
  it('converges to the hypergeometric 1 - C(N-d,n)/C(N,n) when spread has no spatial structure', () => {
    // beta = 0, background only: every pen is equally likely at every step, so the infected set is
    // a uniform d-subset and P(detect) with Se = 1 is the hypergeometric form (Cameron & Baldock 1998, Prev Vet Med 34:1-17:
    // N=36, d=9, n=6 -> 0.848028; N=36, d=1, n=6 -> 1/6).
    const layout = barn(18);
    const ids = idsOf(layout);
    const graph = contactWeights(layout, ids, 'queen', 'binary');
    const ropes = ['A1', 'A4', 'A9', 'B2', 'B12', 'B18'];
    for (const [d, expected] of [
      [9, 0.848028],
      [1, 1 / 6],
    ] as const) {
      expectClose(hypergeometricDetection(36, d, 6), expected, { rel: 1e-6 }, `method 1 N=36 d=${d} n=6`);
      const o = simulateOutbreaks(graph, {
        infected: d,
        beta: 0,
        background: 0.2,
        realisations: 20_000,
        rng: seededRng(d),
      });
      const est = detectionProbability(o, ropes, 1);
      expectClose(est.p, expected, { abs: 4 * est.standardError }, `Monte Carlo vs hypergeometric d=${d}`);
    }
  });

  it('infects exactly d pens in every realisation and stores them as bitsets', () => {
    const layout = barn(40);
    const graph = contactWeights(layout, idsOf(layout), 'queen', 'binary');
    const o = simulateOutbreaks(graph, { infected: 7, beta: 0.4, background: 0, realisations: 200, rng: seededRng(3) });
    for (let r = 0; r < o.realisations; r++) {
      let count = 0;
      for (let w = 0; w < o.words; w++) {
        let v = o.bits[r * o.words + w]!;
        while (v) {
          v &= v - 1;
          count++;
        }
      }
      expect(count).toBe(7);
    }
    // Every pen roped: detection = 1 - E[(1-Se)^d] = 1 - 0.1^7 exactly, with zero standard error.
    const all = detectionProbability(o, idsOf(layout), 0.9);
    expectClose(all.p, 1 - 0.1 ** 7, { rel: 1e-12 }, 'all pens sampled, Se 0.9, d 7');
  });

  it('applies the imperfect rope as 1 - E[prod (1 - Se)] (Cameron & Baldock 1998 form)', () => {
    // No spatial structure, Se = 0.9: Monte Carlo must match the exact imperfect-rope form
    // (Cameron & Baldock 1998, Prev Vet Med 34:1-17), N=36 d=9 n=6 -> 0.807354.
    const layout = barn(18);
    const graph = contactWeights(layout, idsOf(layout), 'queen', 'binary');
    const o = simulateOutbreaks(graph, {
      infected: 9,
      beta: 0,
      background: 0.3,
      realisations: 20_000,
      rng: seededRng(12),
    });
    const est = detectionProbability(o, ['A1', 'A7', 'A13', 'B4', 'B10', 'B16'], 0.9);
    expectClose(est.p, 0.807354, { abs: 4 * est.standardError }, 'Monte Carlo vs method 2');
  });

  it('finds systematic ropes (every 4th pen, alternating sides) better than random ropes under contagious spread', () => {
    // The rope pattern is common practice, no source; Cochran 1977, Sampling Techniques ch. 8, covers
    // the efficiency of systematic samples under positive autocorrelation. Compared on common outbreaks.
    const layout = barn(40);
    const graph = contactWeights(layout, idsOf(layout), 'queen', 'binary');
    const o = simulateOutbreaks(graph, {
      infected: 6,
      beta: 0.5,
      background: 0,
      realisations: 5000,
      rng: seededRng(8),
    });
    const ropes = Array.from({ length: 10 }, (_, i) => `${i % 2 === 0 ? 'A' : 'B'}${1 + 4 * i}`);
    const cmp = compareWithRandomPlacement(o, ropes, 0.9, seededRng(9));
    expect(cmp.difference.value).toBeGreaterThan(3 * cmp.difference.standardError);
    expect(cmp.actual.p).toBeGreaterThan(cmp.random.p);
    // Random sets of 10 of 80 pens: spatial structure does not change the average over random
    // sets, which is method 2 with d = 6: sum_x Hyp(x; 80, 6, 10) (1 - 0.1^x), computed inline.
    let expected = 0;
    for (let x = 0; x <= 6; x++)
      expected += Math.exp(logChoose(6, x) + logChoose(74, 10 - x) - logChoose(80, 10)) * (1 - 0.1 ** x);
    expectClose(cmp.random.p, expected, { abs: 4 * cmp.random.standardError }, 'random placement = method 2');
  });

  it('repeats exactly with the same seed and rejects unknown pens', () => {
    const layout = barn(10);
    const graph = contactWeights(layout, idsOf(layout), 'rook', 'binary');
    const a = simulateOutbreaks(graph, {
      infected: 3,
      beta: 0.3,
      background: 0.01,
      realisations: 100,
      rng: seededRng(5),
    });
    const b = simulateOutbreaks(graph, {
      infected: 3,
      beta: 0.3,
      background: 0.01,
      realisations: 100,
      rng: seededRng(5),
    });
    expect(a.bits).toEqual(b.bits);
    expect(() => detectionProbability(a, ['Z9'], 0.9)).toThrow(/Z9/);
    expect(() =>
      simulateOutbreaks(graph, { infected: 0, beta: 0.3, background: 0, realisations: 1, rng: seededRng(1) }),
    ).toThrow(/infected/);
  });

  it('simulates the outbreaks the chain-binomial step gives when every escape probability is recomputed each step', () => {
    // Reference: the step as Bailey (1975, ch. 14) states it, written out in the test: each step
    // every susceptible pen escapes with (1 - background) times (1 - beta w) for each infected
    // neighbour, products taken over the infected pens in the order they were infected, one draw
    // per susceptible pen in pen order, a uniform subset kept on overshoot, re-seeding a stalled
    // outbreak. The kernel keeps the products up to date as pens are infected: the same bits.
    const layout = barn(12);
    const graph = contactWeights(layout, idsOf(layout), 'queen', 'binary');
    for (const [beta, background] of [
      [0.3, 0.01],
      [0.5, 0],
    ] as const) {
      const options = { infected: 7, beta, background, realisations: 300 };
      const kernel = simulateOutbreaks(graph, { ...options, rng: seededRng(41) });
      const reference = referenceOutbreaks(graph, { ...options, rng: seededRng(41) });
      expect(Array.from(kernel.bits), `beta ${beta} background ${background}`).toEqual(reference.bits);
      expect(kernel.reseeded).toBe(reference.reseeded);
    }
  });

  it('counts the infected ropes of each outbreak as detectionProbability does', () => {
    // The comparison counts the ropes hung a word at a time; its actual column must be the
    // per-pen product of detectionProbability (Cameron & Baldock 1998), to the last digit.
    const layout = barn(25);
    const ids = idsOf(layout);
    const outbreaks = simulateOutbreaks(contactWeights(layout, ids, 'queen', 'binary'), {
      infected: 5,
      beta: 0.3,
      background: 0.001,
      realisations: 2000,
      rng: seededRng(8),
    });
    const ropes = ids.filter((_, i) => i % 4 === 1);
    const comparison = compareWithRandomPlacement(outbreaks, ropes, 0.85, seededRng(9));
    const direct = detectionProbability(outbreaks, ropes, 0.85);
    expect(comparison.actual.p).toBe(direct.p);
    expect(comparison.actual.standardError).toBe(direct.standardError);
  });

  it('draws the random column as a sampler made afresh for each outbreak would, whatever its infected count', () => {
    // Outbreaks infecting 1 to 5 of 40 pens in runs and alternation: the comparison keeps the
    // sampler of the count last met; the reference makes Hyp(n, m, k) by inversion for every
    // outbreak from the same uniforms (drawn first, one per outbreak, in order).
    const ids = Array.from({ length: 40 }, (_, i) => `P${i + 1}`);
    const realisations = 300;
    const words = 2;
    const bits = new Uint32Array(words * realisations);
    const pick = seededRng(21);
    for (let r = 0; r < realisations; r++) {
      const m = r < 100 ? 1 + Math.floor(r / 25) : 1 + Math.floor(pick() * 5);
      for (let placed = 0; placed < m; ) {
        const i = Math.floor(pick() * ids.length);
        const bit = 1 << (i & 31);
        if (bits[r * words + (i >>> 5)]! & bit) continue;
        bits[r * words + (i >>> 5)]! |= bit;
        placed++;
      }
    }
    const outbreaks: Outbreaks = {
      ids,
      index: new Map(ids.map((id, i) => [id, i])),
      realisations,
      infected: 5,
      words,
      bits,
      reseeded: 0,
      model: { beta: 0.3, background: 0, graph: 'hand-made' },
    };
    const ropes = ids.filter((_, i) => i % 3 === 0);
    const se = 0.8;
    const comparison = compareWithRandomPlacement(outbreaks, ropes, se, seededRng(5));
    const draws = seededRng(5);
    const uniforms = Array.from({ length: realisations }, () => draws());
    let sum = 0;
    let sumSq = 0;
    for (let r = 0; r < realisations; r++) {
      let m = 0;
      for (let i = 0; i < ids.length; i++) m += (bits[r * words + (i >>> 5)]! >>> (i & 31)) & 1;
      const v = 1 - (1 - se) ** hypergeometricInversion(ids.length, m, ropes.length)(uniforms[r]!);
      sum += v;
      sumSq += v * v;
    }
    expect(comparison.random.p).toBe(sum / realisations);
    expect(comparison.random.standardError).toBe(
      Math.sqrt(Math.max(0, (sumSq - realisations * (sum / realisations) ** 2) / (realisations - 1)) / realisations),
    );
  });
});

/** The plain chain-binomial simulation (see the test that uses it); bits as simulateOutbreaks packs them. */
function referenceOutbreaks(
  graph: ReturnType<typeof contactWeights>,
  options: { infected: number; beta: number; background: number; realisations: number; rng: () => number },
): { bits: number[]; reseeded: number } {
  const n = graph.ids.length;
  const { infected: d, beta, background, realisations, rng } = options;
  const words = Math.ceil(n / 32);
  const bits = new Array<number>(words * realisations).fill(0);
  let reseeded = 0;
  for (let r = 0; r < realisations; r++) {
    const state = new Array<boolean>(n).fill(false);
    const list = [Math.floor(rng() * n)];
    state[list[0]!] = true;
    while (list.length < d) {
      const escapes = new Array<number>(n).fill(1 - background);
      for (const i of list)
        for (let a = graph.offsets[i]!; a < graph.offsets[i + 1]!; a++)
          escapes[graph.neighbours[a]!]! *= 1 - Math.min(1, beta * graph.weights[a]!);
      const fresh: number[] = [];
      let reachable = false;
      for (let j = 0; j < n; j++) {
        if (state[j]) continue;
        if (escapes[j]! < 1) reachable = true;
        if (rng() >= escapes[j]!) fresh.push(j);
      }
      if (!reachable) {
        const susceptible = state.flatMap((s, j) => (s ? [] : [j]));
        fresh.push(susceptible[Math.floor(rng() * susceptible.length)]!);
        reseeded++;
      }
      const keep = Math.min(fresh.length, d - list.length);
      for (let k = 0; k < keep; k++) {
        const s = k + Math.floor(rng() * (fresh.length - k));
        [fresh[k], fresh[s]] = [fresh[s]!, fresh[k]!];
        state[fresh[k]!] = true;
        list.push(fresh[k]!);
      }
    }
    for (const i of list) bits[r * words + (i >>> 5)]! |= 1 << (i & 31);
  }
  return { bits: bits.map((word) => word >>> 0), reseeded };
}
