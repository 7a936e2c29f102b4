/**
 * Detection when several ropes are tested together in one PCR (pooled ropes).
 */
import { logHypergeometricPmf } from './special.js';
import { requireInteger, requireNumber, requireProbability } from './validate.js';

/**
 * Pooled detection in a large population (binomial form): r pools of k ropes, pen-level design
 * prevalence p*, pool sensitivity PSe and specificity PSp:
 *
 *   P(at least one positive pool) = 1 - [(1 - (1 - p*)^k)(1 - PSe) + (1 - p*)^k PSp]^r.
 *
 * @param pools r >= 0 (integer); @param poolSize k >= 1 (integer); @param prevalence p* in [0, 1];
 * @param poolSensitivity PSe in [0, 1]; @param poolSpecificity PSp in [0, 1] (default 1)
 * @throws RangeError when an argument is out of its domain
 * @see Christensen J, Gardner IA 2000, Herd-level interpretation of test results for
 *   epidemiologic studies of animal diseases, Prev Vet Med 45:83-106 (from memory); R package
 *   epiR, `rsu.sep.rspool`.
 * @example pooledBinomialDetection(5, 3, 0.1, 0.9) // 0.752887 (epiR 2.0.57 rsu.sep.rspool)
 */
export function pooledBinomialDetection(
  pools: number,
  poolSize: number,
  prevalence: number,
  poolSensitivity: number,
  poolSpecificity = 1,
): number {
  requireInteger('pools', pools, 0, Number.MAX_SAFE_INTEGER, '[0, 2^53)');
  requireInteger('poolSize', poolSize, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  requireProbability('prevalence', prevalence);
  requireProbability('poolSensitivity', poolSensitivity);
  requireProbability('poolSpecificity', poolSpecificity);
  const cleanPool = (1 - prevalence) ** poolSize;
  const poolNegative = (1 - cleanPool) * (1 - poolSensitivity) + cleanPool * poolSpecificity;
  // -expm1(r log q) keeps the digits of a detection probability near 0.
  return poolNegative === 0 ? (pools === 0 ? 0 : 1) : -Math.expm1(pools * Math.log(poolNegative));
}

/** The sizes of the pools that `sampled` ropes make in pools of `poolSize` (the last may be smaller). */
export function poolSizes(sampled: number, poolSize: number): number[] {
  requireInteger('sampled', sampled, 0, Number.MAX_SAFE_INTEGER, '[0, 2^53)');
  requireInteger('poolSize', poolSize, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  const sizes: number[] = [];
  for (let left = sampled; left > 0; left -= poolSize) sizes.push(Math.min(poolSize, left));
  return sizes;
}

/** One pool of a round: how many ropes it holds and its accuracy as a pool. */
export interface PoolTest {
  size: number;
  sensitivity: number;
  specificity: number;
}

/**
 * Probability that every pool tests negative when `infectedRopes` of the ropes come from
 * infected pens and the ropes are pooled at random into the given pools. Pools are filled one
 * after another: the infected ropes in the next pool are hypergeometric among the ropes still
 * unpooled (the partition is exchangeable, so the order does not matter); a pool with an
 * infected rope misses with 1 - PSe, a clean one with PSp.
 */
function allPoolsNegative(pools: readonly PoolTest[], infectedRopes: number): number {
  const ropes = pools.reduce((sum, pool) => sum + pool.size, 0);
  // missing[t]: probability that the pools filled so far all tested negative and took t infected ropes.
  let missing = new Float64Array(infectedRopes + 1);
  missing[0] = 1;
  let used = 0;
  for (const { size, sensitivity, specificity } of pools) {
    const next = new Float64Array(infectedRopes + 1);
    const remaining = ropes - used;
    for (let taken = 0; taken <= infectedRopes; taken++) {
      const weight = missing[taken]!;
      if (weight === 0) continue;
      const infectedLeft = infectedRopes - taken;
      for (
        let inPool = Math.max(0, size - (remaining - infectedLeft));
        inPool <= Math.min(size, infectedLeft);
        inPool++
      ) {
        const share = Math.exp(logHypergeometricPmf(inPool, remaining, infectedLeft, size));
        next[taken + inPool]! += weight * share * (inPool === 0 ? specificity : 1 - sensitivity);
      }
    }
    missing = next;
    used += size;
  }
  return missing[infectedRopes]!;
}

/**
 * Detection in a finite barn (exact) when the tested ropes, one per pen in n pens chosen at
 * random, were tested in the given pools: pools of several ropes with the pool-level accuracy,
 * ropes tested on their own as pools of one with the rope's. The same mixture as
 * `pooledDetection`, with pools of any sizes and accuracies:
 *
 *   P(detect) = 1 - sum_x Hyp(x; N, d, n) P(every pool negative | x),   n = sum of pool sizes.
 *
 * @param pens N >= 1; @param infected d in [0, N]; @param pools sizes >= 1 (summing to at most N),
 *   sensitivities and specificities in [0, 1]
 * @throws RangeError when an argument is out of its domain
 * @see Cameron AR, Baldock FC 1998, Prev Vet Med 34:1-17 (the finite-population mixture).
 */
export function pooledDetectionOfPools(pens: number, infected: number, pools: readonly PoolTest[]): number {
  requireInteger('pens', pens, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  requireInteger('infected', infected, 0, pens, '[0, pens]');
  let sampled = 0;
  for (const pool of pools) {
    requireInteger('pool size', pool.size, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
    requireProbability('pool sensitivity', pool.sensitivity);
    requireNumber('pool specificity', pool.specificity, 0, 1);
    sampled += pool.size;
  }
  requireInteger('sampled', sampled, 0, pens, '[0, pens]');
  let miss = 0;
  for (let x = Math.max(0, sampled - (pens - infected)); x <= Math.min(sampled, infected); x++) {
    miss += Math.exp(logHypergeometricPmf(x, pens, infected, sampled)) * allPoolsNegative(pools, x);
  }
  return Math.min(1, Math.max(0, 1 - miss));
}

/**
 * Pooled detection in a finite barn (exact): N pens in use, d infected, n ropes hung in n
 * different pens chosen at random, pooled at random into pools of `poolSize` (the last pool takes
 * what is left). Mixes over x, the infected pens among the n ropes (hypergeometric), and over how
 * those x ropes fall into the pools:
 *
 *   P(detect) = 1 - sum_x Hyp(x; N, d, n) P(every pool negative | x).
 *
 * With pools of one rope, PSe = Se and PSp = 1 this is the imperfect-test detection of Cameron &
 * Baldock 1998.
 *
 * @param pens N >= 1; @param sampled n in [0, N]; @param infected d in [0, N]; @param poolSize k >= 1;
 * @param poolSensitivity PSe in [0, 1]; @param poolSpecificity PSp in [0, 1] (default 1)
 * @throws RangeError when an argument is out of its domain
 * @see Cameron AR, Baldock FC 1998, A new probability formula for surveys to substantiate freedom
 *   from disease, Prev Vet Med 34:1-17 (the finite-population mixture); Christensen J, Gardner IA
 *   2000, Prev Vet Med 45:83-106 (pooled testing, from memory).
 */
export function pooledDetection(
  pens: number,
  sampled: number,
  infected: number,
  poolSize: number,
  poolSensitivity: number,
  poolSpecificity = 1,
): number {
  requireInteger('pens', pens, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  requireInteger('sampled', sampled, 0, pens, '[0, pens]');
  requireInteger('infected', infected, 0, pens, '[0, pens]');
  requireInteger('poolSize', poolSize, 1, Number.MAX_SAFE_INTEGER, '[1, 2^53)');
  requireProbability('poolSensitivity', poolSensitivity);
  requireNumber('poolSpecificity', poolSpecificity, 0, 1);
  return pooledDetectionOfPools(
    pens,
    infected,
    poolSizes(sampled, poolSize).map((size) => ({ size, sensitivity: poolSensitivity, specificity: poolSpecificity })),
  );
}
