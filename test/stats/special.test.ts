import { describe, it } from 'vitest';
import fc from 'fast-check';
import gammaln from '@stdlib/math-base-special-gammaln';
import { balancedLogFactorialSum, logGamma, logHypergeometricPmf } from '../../src/stats/index.js';
import hypergeometricPmf from '@stdlib/stats-base-dists-hypergeometric-pmf';
import { expectClose } from '../helpers/expectClose.js';

describe('log-factorial and log-gamma helpers', () => {
  it('logGamma agrees with @stdlib gammaln', () => {
    // Oracle: @stdlib/math-base-special-gammaln at test time; by hand lnGamma(0.5) = ln(sqrt(pi)).
    expectClose(logGamma(0.5), 0.5 * Math.log(Math.PI), { rel: 1e-14 }, 'x=0.5');
    fc.assert(
      fc.property(fc.double({ min: 1e-3, max: 1e6, noNaN: true }), (x) => {
        expectClose(logGamma(x), gammaln(x), { rel: 1e-13, abs: 1e-13 }, `x=${x}`);
      }),
      { numRuns: 300, seed: 61 },
    );
  });

  it('balanced log-factorial sums equal direct log sums for small arguments', () => {
    // By hand: ln(10!/(4! 6!)) = ln 210.
    expectClose(balancedLogFactorialSum([1, -1, -1], [10, 4, 6]), Math.log(210), { rel: 1e-14 }, 'ln C(10,4)');
    // By hand: ln(40!/(20! 20!)) = ln 137846528820.
    expectClose(
      balancedLogFactorialSum([1, -1, -1], [40, 20, 20]),
      Math.log(137846528820),
      { rel: 1e-14 },
      'ln C(40,20)',
    );
  });

  it('the log hypergeometric pmf agrees with @stdlib for barns up to 100,000 pens', () => {
    // Oracle: @stdlib hypergeometric pmf; its own log-factorial error is ~1e-10 at N = 100,000.
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 100_000 }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        (N, uk, un, ux) => {
          const K = Math.floor(uk * N);
          const n = Math.floor(un * N);
          const lo = Math.max(0, n + K - N);
          const hi = Math.min(n, K);
          const x = lo + Math.floor(ux * (hi - lo));
          const expected = hypergeometricPmf(x, N, K, n);
          if (expected < 1e-300) return;
          expectClose(
            Math.exp(logHypergeometricPmf(x, N, K, n)),
            expected,
            { rel: 1e-9 },
            `x=${x} N=${N} K=${K} n=${n}`,
          );
        },
      ),
      { numRuns: 300, seed: 62 },
    );
  });
});
