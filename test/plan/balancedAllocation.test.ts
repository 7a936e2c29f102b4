import { describe, expect, it } from 'vitest';
import { allocateRopesBalanced, type BarnSizing } from '../../src/plan/sizing.js';
import { seededRng } from '../../src/util/random.js';
import { expectClose } from '../helpers/expectClose.js';

/** Perfect-test hypergeometric detection 1 - C(N-d,n)/C(N,n) (Cameron & Baldock 1998, Prev Vet Med 34:1-17 (hypergeometric form)), inline as an independent check. */
function hypergeometric(N: number, d: number) {
  return (n: number) => {
    let miss = 1;
    for (let i = 0; i < d; i++) miss *= Math.max(0, N - n - i) / (N - i);
    return 1 - miss;
  };
}

function bruteForce(barns: BarnSizing[], budget: number): { min: number; site: number } {
  let best = { min: -1, site: -1 };
  const walk = (b: number, left: number, ps: number[]) => {
    if (b === barns.length) {
      const min = Math.min(...ps);
      const site = 1 - ps.reduce((prod, p) => prod * (1 - p), 1);
      if (min > best.min + 1e-12 || (Math.abs(min - best.min) <= 1e-12 && site > best.site + 1e-12))
        best = { min, site };
      return;
    }
    for (let n = 0; n <= Math.min(left, barns[b]!.maxRopes); n++) walk(b + 1, left - n, [...ps, barns[b]!.detect(n)]);
  };
  walk(0, budget, []);
  return best;
}

describe('balanced rope allocation across barns', () => {
  it('never leaves a barn unwatched when the budget covers a rope in each (hand example: three 40-pen barns, 30 ropes)', () => {
    // Maximising 1 - prod(1 - p_b) alone puts all 30 ropes in one barn (increasing returns of the
    // hypergeometric); the balanced allocation gives each barn 10 (symmetry, common practice, no source).
    const barns = ['F1', 'F2', 'F3'].map((barnId) => ({ barnId, maxRopes: 40, detect: hypergeometric(40, 4) }));
    const allocation = allocateRopesBalanced(barns, 30);
    expect(allocation.ropes.map((entry) => entry.ropes)).toEqual([10, 10, 10]);
    expect(allocation.method).toBe('balanced');
  });

  it('matches a brute-force optimum (max-min, then site detection) on random small sites', () => {
    const rng = seededRng(7);
    for (let trial = 0; trial < 40; trial++) {
      const count = 2 + Math.floor(rng() * 2);
      const barns: BarnSizing[] = Array.from({ length: count }, (_, b) => {
        const N = 4 + Math.floor(rng() * 7);
        const d = 1 + Math.floor(rng() * 3);
        return { barnId: `B${b}`, maxRopes: N, detect: hypergeometric(N, Math.min(d, N)) };
      });
      const budget = Math.floor(rng() * 14);
      const ours = allocateRopesBalanced(barns, budget);
      const brute = bruteForce(barns, budget);
      const label = `trial ${trial}, budget ${budget}, barns ${barns.map((b) => b.maxRopes).join('/')}`;
      expectClose(
        Math.min(...ours.ropes.map((entry) => entry.detection)),
        brute.min,
        { abs: 1e-12 },
        `${label}: least-watched barn`,
      );
      expectClose(ours.siteDetection, brute.site, { abs: 1e-12 }, `${label}: site detection`);
      expect(ours.total).toBeLessThanOrEqual(budget);
    }
  });
});
