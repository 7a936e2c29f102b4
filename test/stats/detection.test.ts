import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import hypergeometricCdf from '@stdlib/stats-base-dists-hypergeometric-cdf';
import hypergeometricPmf from '@stdlib/stats-base-dists-hypergeometric-pmf';
import binomialCdf from '@stdlib/stats-base-dists-binomial-cdf';
import {
  binomialDetection,
  detectionFor,
  falseAlarmProbability,
  hypergeometricDetection,
  imperfectDetection,
} from '../../src/stats/index.js';
import { randomInt, seededRng } from '../../src/util/random.js';
import { expectClose } from '../helpers/expectClose.js';
import oracle from '../fixtures/stats/oracle.json' with { type: 'json' };

describe('hypergeometric detection (perfect rope)', () => {
  it('matches the published check values', () => {
    // Cameron & Baldock 1998, Prev Vet Med 34:1-17 (hypergeometric form): one infected pen of 36, 6 ropes -> n/N = 1/6.
    expectClose(hypergeometricDetection(36, 6, 1), 1 / 6, { rel: 1e-12 }, 'N=36 n=6 d=1');
    // Same form: 1 - C(27,6)/C(36,6) = 1 - 296010/1947792 = 0.848028 (by hand).
    expectClose(hypergeometricDetection(36, 6, 9), 1 - 296010 / 1947792, { rel: 1e-12 }, 'N=36 n=6 d=9');
    expectClose(hypergeometricDetection(36, 6, 9), 0.848028, { abs: 5e-7 }, 'N=36 n=6 d=9 (6 digits)');
    // Same form, by hand: 1 - C(38,10)/C(40,10) = 1 - (30*29)/(40*39) = 1 - 870/1560.
    expectClose(hypergeometricDetection(40, 10, 2), 1 - 870 / 1560, { rel: 1e-12 }, 'N=40 n=10 d=2');
    expectClose(hypergeometricDetection(40, 10, 2), 0.442308, { abs: 5e-7 }, 'N=40 n=10 d=2 (6 digits)');
  });

  it('gives certainty when more ropes are hung than there are uninfected pens, and nothing with no ropes', () => {
    // By hand: n > N - d leaves no way to draw only uninfected pens.
    expect(hypergeometricDetection(10, 6, 5)).toBe(1);
    expect(hypergeometricDetection(10, 0, 5)).toBe(0);
    expect(hypergeometricDetection(10, 5, 0)).toBe(0);
  });

  it('keeps full relative precision for one rope in a barn of 100,000 pens', () => {
    // By hand: one rope, d infected pens -> d / N exactly; 1 - (1 - d/N) would keep only ~11 digits.
    expectClose(hypergeometricDetection(100_000, 1, 3), 3e-5, { rel: 1e-13 }, 'N=100000 n=1 d=3');
    // By hand: n ropes, one infected pen -> n / N.
    expectClose(hypergeometricDetection(100_000, 4000, 1), 0.04, { rel: 1e-13 }, 'N=100000 n=4000 d=1');
  });

  it('agrees with the committed @stdlib fixture to 1e-9 over N up to 100,000', () => {
    // Oracle: test/fixtures/stats/oracle.json from generate.ts (@stdlib hypergeometric cdf, versions in
    // its header). Absolute 1e-9: @stdlib's log-factorial pmf itself carries ~3e-10 at N=100,000
    // (its n=1 rows miss d/N by that much), so a tighter bound would test @stdlib, not this engine.
    expect(oracle.hypergeometric.length).toBeGreaterThan(300);
    for (const row of oracle.hypergeometric) {
      expectClose(
        hypergeometricDetection(row.N, row.n, row.d),
        row.detect,
        { abs: 1e-9 },
        `N=${row.N} n=${row.n} d=${row.d}`,
      );
    }
  });

  it('agrees with @stdlib hypergeometric cdf evaluated now on a seeded grid of barns up to 500 pens', () => {
    // Oracle: @stdlib/stats-base-dists-hypergeometric-cdf at test time; P(detect) = 1 - P(X = 0).
    const rng = seededRng(7);
    for (let k = 0; k < 400; k++) {
      const N = 1 + randomInt(rng, 500);
      const n = randomInt(rng, N + 1);
      const d = randomInt(rng, N + 1);
      expectClose(
        hypergeometricDetection(N, n, d),
        1 - hypergeometricCdf(0, N, d, n),
        { abs: 1e-12 },
        `N=${N} n=${n} d=${d}`,
      );
    }
  });

  it('rejects ropes beyond the barn, fractional pens and an empty barn with the shared message grammar', () => {
    // Team rule: "`sampled` must be an integer in [0, pens], got 40".
    expect(() => hypergeometricDetection(36, 40, 1)).toThrow(
      new RangeError('`sampled` must be an integer in [0, pens], got 40'),
    );
    expect(() => hypergeometricDetection(36, 6, 37)).toThrow(/`infected` must be an integer in \[0, pens\], got 37/);
    expect(() => hypergeometricDetection(36.5, 6, 1)).toThrow(RangeError);
    expect(() => hypergeometricDetection(0, 0, 0)).toThrow(/`pens` must be an integer/);
    expect(() => hypergeometricDetection(36, Number.NaN, 1)).toThrow(/got NaN/);
  });
});

describe('imperfect rope detection (Cameron & Baldock 1998)', () => {
  it('matches the published check values', () => {
    // Cameron & Baldock 1998, Prev Vet Med 34:1-17.
    expectClose(imperfectDetection(36, 6, 9, 0.9), 0.807354, { abs: 5e-7 }, 'N=36 n=6 d=9 Se=0.9');
    expectClose(imperfectDetection(40, 10, 4, 0.9), 0.653525, { abs: 5e-7 }, 'N=40 n=10 d=4 Se=0.9');
    // By hand: with d = 1 the chance is n Se / N = 6 * 0.9 / 36 = 0.15.
    expectClose(imperfectDetection(36, 6, 1, 0.9), 0.15, { rel: 1e-12 }, 'N=36 n=6 d=1 Se=0.9');
  });

  it('equals n Se / N for a single infected pen in any barn', () => {
    // Cameron & Baldock 1998 with d = 1: P = (n/N) Se, since X is 0 or 1 with P(X=1) = n/N.
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 100_000 }),
        fc.double({ min: 0.01, max: 0.99, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        (N, se, u) => {
          const n = Math.floor(u * N);
          expectClose(
            imperfectDetection(N, n, 1, se),
            (n / N) * se,
            { rel: 1e-11, abs: 1e-300 },
            `N=${N} n=${n} d=1 Se=${se}`,
          );
        },
      ),
      { numRuns: 200, seed: 11 },
    );
  });

  it('agrees with the committed @stdlib fixture (sum of pmf terms) to 1e-9', () => {
    // Oracle: oracle.json "imperfect": sum_x @stdlib pmf(x) [1 - (1-Se)^x]; same 1e-9 reasoning as above.
    for (const row of oracle.imperfect) {
      expectClose(
        imperfectDetection(row.N, row.n, row.d, row.se),
        row.detect,
        { abs: 1e-9 },
        `N=${row.N} n=${row.n} d=${row.d} Se=${row.se}`,
      );
    }
  });

  it('agrees with @stdlib pmf sums evaluated now on a seeded grid', () => {
    const rng = seededRng(8);
    for (let k = 0; k < 200; k++) {
      const N = 1 + randomInt(rng, 300);
      const n = randomInt(rng, N + 1);
      const d = randomInt(rng, N + 1);
      const se = rng();
      let expected = 0;
      for (let x = Math.max(0, n + d - N); x <= Math.min(n, d); x++)
        expected += hypergeometricPmf(x, N, d, n) * (1 - (1 - se) ** x);
      expectClose(imperfectDetection(N, n, d, se), expected, { abs: 1e-12 }, `N=${N} n=${n} d=${d} Se=${se}`);
    }
  });

  it('reduces to the perfect-rope formula when Se = 1 and to zero when Se = 0', () => {
    // Definition: (1 - Se)^x is 0 for x >= 1 when Se = 1, and 1 when Se = 0.
    expectClose(
      imperfectDetection(36, 6, 9, 1),
      hypergeometricDetection(36, 6, 9),
      { rel: 1e-15 },
      'N=36 n=6 d=9 Se=1',
    );
    expect(imperfectDetection(36, 6, 9, 0)).toBe(0);
  });

  it('gives 1 - (1 - Se)^d for a census', () => {
    // By hand: with a rope in every pen, X = d surely.
    expectClose(
      detectionFor({ pens: 40, infected: 3, sensitivity: 0.7 })(40),
      1 - 0.3 ** 3,
      { rel: 1e-13 },
      'N=40 n=40 d=3 Se=0.7',
    );
  });

  it('never decreases when ropes, infected pens or sensitivity increase', () => {
    // Invariant (STYLE.md): monotone in n, d, Se.
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 400 }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        (N, un, ud, se, bump) => {
          const n = Math.min(N - 1, Math.floor(un * N));
          const d = Math.min(N - 1, Math.floor(ud * N));
          const p = imperfectDetection(N, n, d, se);
          const label = `N=${N} n=${n} d=${d} Se=${se}`;
          expect(p).toBeGreaterThanOrEqual(0);
          expect(p).toBeLessThanOrEqual(1);
          expect(imperfectDetection(N, n + 1, d, se), `n+1 ${label}`).toBeGreaterThanOrEqual(p - 1e-14);
          expect(imperfectDetection(N, n, d + 1, se), `d+1 ${label}`).toBeGreaterThanOrEqual(p - 1e-14);
          const higher = se + (1 - se) * bump;
          expect(imperfectDetection(N, n, d, higher), `Se=${higher} ${label}`).toBeGreaterThanOrEqual(p - 1e-14);
        },
      ),
      { numRuns: 300, seed: 12 },
    );
  });

  it('evaluates quickly and exactly in a barn of 100,000 pens with half of them sampled', () => {
    // Oracle: the committed fixture row sizes go this far; here the answer must be a finite probability
    // and match the perfect-rope formula applied to an equivalent bound: P(Se) <= P(Se=1).
    const started = performance.now();
    const p = imperfectDetection(100_000, 50_000, 5, 0.3);
    expect(performance.now() - started).toBeLessThan(50);
    // By hand: X ~ Hyp(100000, 5, 50000) is close to Bin(5, 0.5): E[0.7^X] ~ (0.5 + 0.35)^5 = 0.4437.
    expectClose(p, 1 - 0.85 ** 5, { abs: 1e-4 }, 'N=100000 n=50000 d=5 Se=0.3 (binomial approximation)');
  });

  it('the factory validates once and still rejects a bad sample', () => {
    const detect = detectionFor({ pens: 36, infected: 9, sensitivity: 0.9 });
    expectClose(detect(6), 0.807354, { abs: 5e-7 }, 'N=36 n=6 d=9 Se=0.9 via factory'); // Cameron & Baldock 1998, Prev Vet Med 34:1-17
    expect(() => detect(37)).toThrow('`sampled` must be an integer in [0, pens], got 37');
    expect(() => detectionFor({ pens: 36, infected: 9, sensitivity: 1.2 })).toThrow(
      '`sensitivity` must be a number in [0, 1], got 1.2',
    );
  });
});

describe('binomial detection and false alarms', () => {
  it('matches 1 - (1 - p Se)^n at the classic 59 ropes for 5% prevalence', () => {
    // Binomial form, by hand: 1 - 0.95^59 = 0.951505 and 1 - 0.95^58 = 0.948953.
    expectClose(binomialDetection(0.05, 59), 1 - 0.95 ** 59, { rel: 1e-13 }, 'p=0.05 n=59');
    expectClose(binomialDetection(0.05, 58), 0.948953, { abs: 1e-6 }, 'p=0.05 n=58');
  });

  it('agrees with the committed @stdlib binomial fixture', () => {
    // Oracle: oracle.json "binomial", 1 - @stdlib binomial cdf(0; n, p Se).
    for (const row of oracle.binomial) {
      expectClose(
        binomialDetection(row.p, row.n, row.se),
        row.detect,
        { rel: 1e-12, abs: 1e-15 },
        `p=${row.p} n=${row.n} Se=${row.se}`,
      );
    }
  });

  it('agrees with @stdlib binomial cdf now for tiny prevalences, where 1 - (1-p)^n would lose digits', () => {
    // Oracle: @stdlib binomial cdf at test time (computed there in its own way); relative tolerance.
    for (const p of [1e-3, 1e-6, 1e-9]) {
      // @stdlib forms 1 - P(Y=0) itself, so it keeps only ~1e-16/p of relative precision.
      const expected = 1 - binomialCdf(0, 10, p);
      expectClose(binomialDetection(p, 10), expected, { rel: Math.max(1e-12, 1e-15 / p) }, `p=${p} n=10`);
    }
    for (const p of [1e-6, 1e-9, 1e-12]) {
      // By hand, binomial series: 1 - (1-p)^10 = 10p - 45p^2 + 120p^3 - ..., remainder ~21p^3 relative.
      expectClose(binomialDetection(p, 10), 10 * p - 45 * p * p + 120 * p ** 3, { rel: 1e-14 }, `p=${p} n=10 series`);
    }
  });

  it('reports the false-alarm probability 1 - Sp^n', () => {
    // Binomial form, by hand: 1 - 0.99^10 = 0.0956179.
    expectClose(falseAlarmProbability(10, 0.99), 1 - 0.99 ** 10, { rel: 1e-13 }, 'n=10 Sp=0.99');
    expect(falseAlarmProbability(10, 1)).toBe(0);
    expect(() => falseAlarmProbability(10, -0.1)).toThrow('`specificity` must be a number in [0, 1], got -0.1');
  });
});
