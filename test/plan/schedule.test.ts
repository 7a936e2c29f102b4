import fc from 'fast-check';
import { scheduleNoteText } from '../../src/report/barnPlanNotes.js';
import { describe, expect, it } from 'vitest';
import {
  compareSchedules,
  compareSchedulesGrowing,
  expectedDelay,
  infectedAfter,
  simulateDelay,
} from '../../src/plan/index.js';
import { seededRng } from '../../src/util/random.js';
import { expectClose } from '../helpers/expectClose.js';
import { hypergeometricDetect, imperfectDetect } from './helpers.js';

describe('expected delay to detection', () => {
  it('matches the check value D = 1 week, p = 0.246429 -> 3.5580 weeks', () => {
    // Derived by hand: uniform introduction time, a geometric number of rounds (common practice, no published source).
    expectClose(expectedDelay(1, 0.246429), 3.558, { abs: 5e-5 }, 'check by hand: D=1 p=0.246429');
    // By hand: p = 1 means the first round finds it, on average half an interval away.
    expectClose(expectedDelay(14, 1), 7, { rel: 1e-15 }, 'D=14 p=1');
    expectClose(expectedDelay(7, 0.5), 10.5, { rel: 1e-15 }, 'D=7 p=0.5: 7 (2 - 1/2), by hand');
    expect(() => expectedDelay(7, 0)).toThrow('`perRound` must be a number in (0, 1], got 0');
  });

  it('compares n every D with n/2 every D/2 and 2n every 2D at the same ropes per month', () => {
    // Binomial model, p Se = 0.1 per rope (binomial form, by hand): p(n) = 1 - 0.9^n.
    const detect = (n: number) => 1 - 0.9 ** n;
    const { options, notes } = compareSchedules({ ropes: 10, intervalDays: 14, maxRopes: 40, detect });
    expect(options.map((o) => [o.ropes, o.intervalDays])).toEqual([
      [10, 14],
      [5, 7],
      [20, 28],
    ]);
    for (const o of options)
      expectClose(o.ropesPer30Days, (10 * 30) / 14, { rel: 1e-12 }, `${o.label} ropes per 30 days`);
    for (const o of options)
      expectClose(o.expectedDelayDays!, o.intervalDays * (1 / detect(o.ropes) - 0.5), { rel: 1e-12 }, o.label);
    // With a static prevalence the more frequent schedule is quicker on average (method 10):
    // 7 (1/0.40951 - 1/2) = 13.59 days < 14 (1/0.65132 - 1/2) = 14.49 < 28 (1/0.87842 - 1/2) = 17.88.
    expectClose(options[1]!.expectedDelayDays!, 13.5937, { abs: 5e-4 }, 'half every D/2 (by hand)');
    expect(options[1]!.expectedDelayDays!).toBeLessThan(options[0]!.expectedDelayDays!);
    expect(options[0]!.expectedDelayDays!).toBeLessThan(options[2]!.expectedDelayDays!);
    expect(notes).toEqual([]);
    // By hand: 25 is odd, so half is ceil(25 / 2) = 13; twice 25 = 50 exceeds the 40 pens in use.
    const odd = compareSchedules({ ropes: 25, intervalDays: 14, maxRopes: 40, detect }).notes;
    expect(odd).toEqual([
      { kind: 'odd-halving', ropes: 25, halved: 13 },
      { kind: 'doubling-capped', ropes: 25, maxRopes: 40 },
    ]);
    expect(odd.map(scheduleNoteText).join(' ')).toMatch(/uses 13 .*Twice 25 ropes exceeds the 40 pens/);
  });
});

describe('delay to detection while infection grows (Monte Carlo)', () => {
  it('converges to D (1/p - 1/2) when prevalence does not grow', () => {
    const model = {
      initialInfected: 2,
      doublingDays: Infinity,
      maxInfected: 40,
      detectAt: (n: number, d: number) => hypergeometricDetect(40, d, n),
    };
    const result = simulateDelay({ ropes: 6, intervalDays: 7 }, model, { replicates: 20_000, rng: seededRng(3) });
    const exact = expectedDelay(7, hypergeometricDetect(40, 2, 6));
    expect(result.censored).toBe(0);
    // Within 4 standard errors of the formula D (1/p - 1/2), derived by hand: uniform introduction
    // time, a geometric number of rounds (common practice, no published source).
    expectClose(result.meanDays!, exact, { abs: 4 * result.standardError! }, 'static d=2 N=40 n=6 D=7');
  });

  it('draws the introduction uniformly within the round interval', () => {
    // With certain detection the delay is the wait to the first round, uniform on (0, D):
    // mean D/2, standard deviation D / sqrt(12) (by hand), so SE = D / sqrt(12 m).
    const model = { initialInfected: 1, doublingDays: Infinity, maxInfected: 10, detectAt: () => 1 };
    const m = 20_000;
    const result = simulateDelay({ ropes: 10, intervalDays: 14 }, model, { replicates: m, rng: seededRng(5) });
    expectClose(result.standardError!, 14 / Math.sqrt(12 * m), { rel: 0.03 }, 'uniform wait D=14 SE');
    expectClose(result.meanDays!, 7, { abs: 4 * result.standardError! }, 'uniform wait D=14 mean');
  });

  it('gives the result of the plain replicate loop (the growth computed every round) for the same seed', () => {
    // Reference: the Monte Carlo as its doc states it, written out: per replicate a uniform
    // introduction within the interval, then per round the infected pens min(N, floor(d0 2^(t/T)))
    // and one draw against detectAt. The kernel stops computing the growth once every pen is
    // infected (it only grows) and keeps detectAt's answers in an array: the same draws and sums.
    const detectAt = (n: number, d: number) => imperfectDetect(30, d, n, 0.7);
    const model = { initialInfected: 1, doublingDays: 5, maxInfected: 30, detectAt };
    const schedule = { ropes: 3, intervalDays: 14 };
    const kernel = simulateDelay(schedule, model, { replicates: 3000, rng: seededRng(12) });
    const rng = seededRng(12);
    let sum = 0;
    let sumSq = 0;
    let detected = 0;
    for (let rep = 0; rep < 3000; rep++) {
      const first = rng() * 14;
      for (let round = 0; round < 10_000; round++) {
        const days = first + round * 14;
        const infected = Math.min(30, Math.max(1, Math.floor(2 ** (days / 5))));
        if (rng() < detectAt(3, infected)) {
          sum += days;
          sumSq += days * days;
          detected++;
          break;
        }
      }
    }
    expect(kernel.censored).toBe(3000 - detected);
    expect(kernel.meanDays).toBe(sum / detected);
    expect(kernel.standardError).toBe(Math.sqrt((sumSq - (sum * sum) / detected) / (detected - 1) / detected));
  });

  it('gives the result of the plain loop for any growth, including days that fall on a doubling exactly', () => {
    // The kernel compares the days with each count's threshold exponent and computes the power
    // only near one; the reference computes infectedAfter every round. The generator gives 0
    // about one time in four, so that introductions fall on a round and, with the interval a
    // multiple of the doubling time, the days meet the thresholds exactly.
    const zeroOften = (seed: number) => {
      const inner = seededRng(seed);
      return () => (inner() < 0.25 ? 0 : inner());
    };
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 4 }),
        fc.integer({ min: 0, max: 60 }),
        fc.oneof(fc.constant(Number.POSITIVE_INFINITY), fc.double({ min: 0.5, max: 30, noNaN: true })),
        fc.oneof(fc.constantFrom(0.5, 1, 2, 3), fc.double({ min: 0.05, max: 8, noNaN: true })),
        fc.integer({ min: 0, max: 2 ** 31 }),
        (initialInfected, extra, doublingDays, intervalPerDoubling, seed) => {
          const maxInfected = initialInfected + extra;
          const intervalDays = Number.isFinite(doublingDays) ? doublingDays * intervalPerDoubling : intervalPerDoubling;
          const detectAt = (_ropes: number, infected: number) => infected / (4 * maxInfected);
          const model = { initialInfected, doublingDays, maxInfected, detectAt };
          const options = { replicates: 200, maxRounds: 60 };
          const kernel = simulateDelay({ ropes: 1, intervalDays }, model, { ...options, rng: zeroOften(seed) });
          const rng = zeroOften(seed);
          let sum = 0;
          let sumSq = 0;
          let detected = 0;
          for (let rep = 0; rep < options.replicates; rep++) {
            const first = rng() * intervalDays;
            for (let round = 0; round < options.maxRounds; round++) {
              const days = first + round * intervalDays;
              if (rng() < detectAt(1, infectedAfter(model, days))) {
                sum += days;
                sumSq += days * days;
                detected++;
                break;
              }
            }
          }
          expect(kernel.censored).toBe(options.replicates - detected);
          expect(kernel.meanDays).toBe(detected > 0 ? sum / detected : null);
          expect(kernel.standardError).toBe(
            detected > 1 ? Math.sqrt(Math.max(0, (sumSq - (sum * sum) / detected) / (detected - 1)) / detected) : null,
          );
        },
      ),
      { numRuns: 300 },
    );
  });

  it('grows infected pens by doubling and caps them at the pens in use', () => {
    const model = { initialInfected: 1, doublingDays: 7, maxInfected: 20, detectAt: () => 0 };
    expect([0, 6.9, 7, 14, 21, 35].map((t) => infectedAfter(model, t))).toEqual([1, 1, 2, 4, 8, 20]); // 2^(t/7), by hand
  });

  it('finds a faster-growing infection sooner, never later than at a static prevalence, and repeats for a seed', () => {
    // Invariants of the model, by construction: more infected pens never lower detection
    // (method 2 is monotone in d), so faster doubling can only shorten the delay.
    const detectAt = (n: number, d: number) => imperfectDetect(40, d, n, 0.8);
    const model = (doublingDays: number) => ({ initialInfected: 1, doublingDays, maxInfected: 40, detectAt });
    const run = (doublingDays: number) =>
      compareSchedulesGrowing({ ropes: 8, intervalDays: 14, maxRopes: 40 }, model(doublingDays), {
        replicates: 4000,
        rng: seededRng(99),
      });
    const fast = run(5);
    const slow = run(20);
    fast.options.forEach((option, i) => {
      const slowMean = slow.options[i]!.simulated;
      const f = option.simulated;
      expect(f.meanDays! + 2 * f.standardError!, option.label).toBeLessThan(slowMean.meanDays!);
      expect(slowMean.meanDays! - 2 * slowMean.standardError!, option.label).toBeLessThan(option.expectedDelayDays!);
    });
    expect(run(5)).toEqual(fast);
  });

  it('counts replicates never detected as censored instead of averaging them in', () => {
    const model = { initialInfected: 1, doublingDays: Infinity, maxInfected: 10, detectAt: () => 0 };
    const result = simulateDelay({ ropes: 3, intervalDays: 7 }, model, {
      replicates: 10,
      rng: seededRng(1),
      maxRounds: 5,
    });
    expect(result).toEqual({ replicates: 10, meanDays: null, standardError: null, censored: 10 });
  });
});
