/**
 * Spatially aware detection: how likely a set of ropes is to find an infection that spreads
 * from pen to pen, by Monte Carlo on simulated outbreaks shared between rope sets.
 */
import { hypergeometricInversion } from '../stats/hypergeometricDraw.js';
import { fillUniform, type Rng } from '../util/random.js';
import type { SpatialWeights } from './weights.js';

export interface OutbreakOptions {
  /** Pens infected when the outbreak is observed (the design number d), integer in [1, pens]. */
  infected: number;
  /** Per-step transmission probability across one unit of weight (a contact), in [0, 1]. */
  beta: number;
  /** Per-step background probability of infection of any susceptible pen, in [0, 1]. */
  background: number;
  /** Simulated outbreaks, integer >= 1. */
  realisations: number;
  rng: Rng;
}

/**
 * Simulated outbreaks as bitsets: realisation r infects pen i when bit i of
 * `bits[r * words ...]` is set. Reused by every rope set so comparisons use common random numbers.
 */
export interface Outbreaks {
  readonly ids: readonly string[];
  readonly index: ReadonlyMap<string, number>;
  readonly realisations: number;
  readonly infected: number;
  readonly words: number;
  readonly bits: Uint32Array;
  /** Outbreaks that stalled (no susceptible pen reachable, no background) and were re-seeded. */
  readonly reseeded: number;
  readonly model: { beta: number; background: number; graph: string };
}

export interface DetectionEstimate {
  /** Estimated P(detect) = 1 - mean over outbreaks of prod over infected sampled pens (1 - Se). */
  p: number;
  /** Monte Carlo standard error sd / sqrt(R). */
  standardError: number;
  realisations: number;
}

function checkProbability(name: string, v: number): void {
  if (!(Number.isFinite(v) && v >= 0 && v <= 1))
    throw new RangeError(`\`${name}\` must be a number in [0, 1], got ${v}`);
}

/**
 * Discrete-time SI outbreaks on the pen graph: one pen, uniformly chosen, is infected first;
 * each step a susceptible pen j is infected with probability
 * 1 - (1 - background) prod_{infected i ~ j} (1 - min(1, beta w_ij)), which with binary
 * contact weights is 1 - (1 - beta)^k_j (1 - eps), k_j = infected neighbours. With distance
 * weights (e.g. inverse distance) it is a distance-decay kernel. Steps run until `infected`
 * pens are infected; when the last step overshoots, a uniform subset of that step's new
 * infections is kept so that exactly d pens are infected. A stalled outbreak (no contact
 * reaches a susceptible pen and background = 0) is re-seeded in a uniform susceptible pen and
 * counted in `reseeded`.
 *
 * @param graph weights among the in-use pens of the barn (all of them, not only the sampled).
 * @throws RangeError on bad options.
 * @see Bailey N.T.J. (1975) The Mathematical Theory of Infectious Diseases, ch. 14 (chain-binomial
 *   spread on a lattice).
 * @see Reed-Frost chain binomial: Abbey H. (1952) An examination of the Reed-Frost theory of epidemics,
 *   Human Biology 24:201-233.
 */
export function simulateOutbreaks(graph: SpatialWeights, options: OutbreakOptions): Outbreaks {
  const n = graph.ids.length;
  const { infected: d, beta, background, realisations, rng } = options;
  if (!Number.isInteger(d) || d < 1 || d > n)
    throw new RangeError(`\`infected\` must be an integer in [1, ${n}], got ${d}`);
  checkProbability('beta', beta);
  checkProbability('background', background);
  if (!Number.isInteger(realisations) || realisations < 1)
    throw new RangeError(`\`realisations\` must be an integer >= 1, got ${realisations}`);
  const words = Math.ceil(n / 32);
  const bits = new Uint32Array(words * realisations);
  const state = new Uint8Array(n);
  const escapeProbability = new Float64Array(n);
  const list = new Int32Array(n);
  const fresh = new Int32Array(n);
  const draws = new Float64Array(n);
  const transmit = Float64Array.from(graph.weights, (w) => 1 - Math.min(1, beta * w));
  let reseeded = 0;
  const { offsets, neighbours } = graph;
  for (let r = 0; r < realisations; r++) {
    state.fill(0);
    // A pen's escape probability is (1 - background) times the transmit factor of each infected
    // neighbour, multiplied in as each neighbour is infected: the same products, in the same
    // order, as recomputing them from the list of infected pens at every step.
    escapeProbability.fill(1 - background);
    let count = 0;
    const first = Math.floor(rng() * n);
    state[first] = 1;
    list[count++] = first;
    for (let a = offsets[first]!; a < offsets[first + 1]!; a++) escapeProbability[neighbours[a]!]! *= transmit[a]!;
    while (count < d) {
      let added = 0;
      let reachable = false;
      // One draw per susceptible pen, in pen order.
      fillUniform(rng, draws, n - count);
      for (let j = 0, q = 0; j < n; j++) {
        if (state[j]) continue;
        const e = escapeProbability[j]!;
        if (e < 1) reachable = true;
        if (draws[q++]! >= e) fresh[added++] = j;
      }
      if (!reachable) {
        // Nothing can happen by contact or background: start a new focus in a uniform susceptible pen.
        let pick = Math.floor(rng() * (n - count));
        for (let j = 0; j < n; j++) {
          if (state[j]) continue;
          if (pick-- === 0) {
            fresh[added++] = j;
            break;
          }
        }
        reseeded++;
      }
      const keep = Math.min(added, d - count);
      // Partial Fisher-Yates: a uniform subset of this step's infections when the step overshoots d.
      for (let k = 0; k < keep; k++) {
        const s = k + Math.floor(rng() * (added - k));
        const tmp = fresh[k]!;
        fresh[k] = fresh[s]!;
        fresh[s] = tmp;
        const pen = fresh[k]!;
        state[pen] = 1;
        list[count++] = pen;
        for (let a = offsets[pen]!; a < offsets[pen + 1]!; a++) escapeProbability[neighbours[a]!]! *= transmit[a]!;
      }
    }
    const base = r * words;
    for (let c = 0; c < count; c++) {
      const i = list[c]!;
      bits[base + (i >>> 5)]! |= 1 << (i & 31);
    }
  }
  const index = new Map(graph.ids.map((id, i) => [id, i] as const));
  return Object.freeze({
    ids: graph.ids,
    index,
    realisations,
    infected: d,
    words,
    bits,
    reseeded,
    model: { beta, background, graph: graph.description },
  });
}

function resolveSampled(outbreaks: Outbreaks, sampledPenIds: readonly string[]): Int32Array {
  const seen = new Set<string>();
  return Int32Array.from(sampledPenIds, (id) => {
    const i = outbreaks.index.get(id);
    if (i === undefined) throw new RangeError(`\`sampledPenIds\` must name pens of the outbreak graph, got ${id}`);
    if (seen.has(id)) throw new RangeError(`\`sampledPenIds\` must not repeat a pen, got ${id} twice`);
    seen.add(id);
    return i;
  });
}

function sensitivities(
  outbreaks: Outbreaks,
  sampled: Int32Array,
  se: number | Readonly<Record<string, number>>,
): Float64Array {
  return Float64Array.from(sampled, (i) => {
    const v = typeof se === 'number' ? se : (se[outbreaks.ids[i]!] ?? NaN);
    checkProbability(`se of ${outbreaks.ids[i]}`, v);
    return 1 - v;
  });
}

function summarise(sum: number, sumSq: number, r: number): DetectionEstimate {
  const p = sum / r;
  const variance = r > 1 ? Math.max(0, (sumSq - r * p * p) / (r - 1)) : 0;
  return { p, standardError: Math.sqrt(variance / r), realisations: r };
}

/**
 * Detection probability of a rope set on shared outbreaks:
 * P(detect) = 1 - E[prod over infected sampled pens i of (1 - Se_i)], estimated by the mean
 * over realisations, with standard error sd / sqrt(R).
 *
 * @param sampledPenIds pens with a rope (distinct, pens of the outbreak graph).
 * @param se rope sensitivity in [0, 1], one number or one per pen id.
 * @throws RangeError on an unknown pen or a bad sensitivity.
 * @see Cameron A.R., Baldock F.C. (1998) A new probability formula for surveys to substantiate
 *   freedom from disease, Prev. Vet. Med. 34:1-17 (the same per-unit miss product).
 */
export function detectionProbability(
  outbreaks: Outbreaks,
  sampledPenIds: readonly string[],
  se: number | Readonly<Record<string, number>>,
): DetectionEstimate {
  const sampled = resolveSampled(outbreaks, sampledPenIds);
  const miss = sensitivities(outbreaks, sampled, se);
  const { bits, words, realisations } = outbreaks;
  let sum = 0;
  let sumSq = 0;
  for (let r = 0; r < realisations; r++) {
    const base = r * words;
    let m = 1;
    for (let s = 0; s < sampled.length; s++) {
      const i = sampled[s]!;
      if ((bits[base + (i >>> 5)]! >>> (i & 31)) & 1) m *= miss[s]!;
    }
    const v = 1 - m;
    sum += v;
    sumSq += v * v;
  }
  return summarise(sum, sumSq, realisations);
}

export interface PlacementComparison {
  actual: DetectionEstimate;
  /** Average over simple random rope sets of the same size: one fresh random set per outbreak. */
  random: DetectionEstimate;
  /** actual - random, with the standard error of the paired differences (common outbreaks). */
  difference: { value: number; standardError: number };
  ropes: number;
}

/**
 * Compares the ropes actually hung with simple random rope sets of the same size on the same
 * outbreaks (common random numbers): for each outbreak a fresh uniform random set is drawn (as
 * the count of its ropes on infected pens, which is all its detection depends on; see
 * placementSums), so the random column estimates the average over random sets, and the paired
 * difference has a much smaller standard error than two independent runs would give.
 *
 * @param se one rope sensitivity in [0, 1] for every pen.
 * @throws RangeError on an unknown pen or a bad sensitivity.
 * @see Cochran W.G. (1977) Sampling Techniques, 3rd ed., ch. 8 (systematic versus simple random sampling).
 */
export function compareWithRandomPlacement(
  outbreaks: Outbreaks,
  sampledPenIds: readonly string[],
  se: number,
  rng: Rng,
): PlacementComparison {
  const sampled = resolveSampled(outbreaks, sampledPenIds);
  checkProbability('se', se);
  const sums = placementSums(outbreaks, sampled, se, rng);
  const diff = summarise(sums[4]!, sums[5]!, outbreaks.realisations);
  return {
    actual: summarise(sums[0]!, sums[1]!, outbreaks.realisations),
    random: summarise(sums[2]!, sums[3]!, outbreaks.realisations),
    difference: { value: diff.p, standardError: diff.standardError },
    ropes: sampled.length,
  };
}

/**
 * The set bits of a 32-bit word (SWAR population count).
 * @see Warren H.S. (2012) Hacker's Delight, 2nd ed., section 5-1.
 */
function bitCount(word: number): number {
  let x = word - ((word >>> 1) & 0x55555555);
  x = (x & 0x33333333) + ((x >>> 2) & 0x33333333);
  x = (x + (x >>> 4)) & 0x0f0f0f0f;
  return Math.imul(x, 0x01010101) >>> 24;
}

/**
 * The Monte Carlo loop of compareWithRandomPlacement: sums of the actual (0, 1: value and
 * square), random (2, 3) and paired difference (4, 5) detection over the outbreaks. A function
 * of its own that accumulates in place and returns at once: the engine compiles a long loop
 * while it runs, and code after the loop that had never run before would send every later call
 * back to the interpreter.
 *
 * The random set's detection depends on the outbreak only through how many of its k ropes fall
 * on the outbreak's infected pens. For an outbreak that infected m of the n pens (m = d for every
 * outbreak of simulateOutbreaks), that count for a uniform random k-set is hypergeometric,
 * Hyp(n, m, k), whichever m pens they are: it is drawn directly (one uniform per outbreak, by
 * inversion) rather than by placing the k ropes one by one, with the same distribution of the
 * random column and of the paired difference given the outbreaks.
 */
function placementSums(outbreaks: Outbreaks, sampled: Int32Array, se: number, rng: Rng): Float64Array {
  const n = outbreaks.ids.length;
  const k = sampled.length;
  const missPow = Float64Array.from({ length: k + 1 }, (_, c) => (1 - se) ** c);
  const { bits, words, realisations } = outbreaks;
  // One sampler per number of infected pens met (one in all for simulateOutbreaks); the last one
  // met is kept at hand, since looking it up in the sparse array for every outbreak cost more
  // than the draw itself.
  const randomCount: ((u: number) => number)[] = [];
  let lastInfected = -1;
  let lastDraw: (u: number) => number = () => 0;
  // The ropes hung as a bitset like the outbreaks': the infected ropes of an outbreak are then
  // counted a word (32 pens) at a time.
  const hung = new Uint32Array(words);
  for (let s = 0; s < k; s++) hung[sampled[s]! >>> 5]! |= 1 << (sampled[s]! & 31);
  const sums = new Float64Array(6);
  const draws = new Float64Array(realisations);
  fillUniform(rng, draws, realisations);
  for (let r = 0; r < realisations; r++) {
    const base = r * words;
    let ca = 0;
    let m = 0;
    for (let w = 0; w < words; w++) {
      const word = bits[base + w]!;
      ca += bitCount(word & hung[w]!);
      m += bitCount(word);
    }
    if (m !== lastInfected) {
      lastDraw = randomCount[m] ??= hypergeometricInversion(n, m, k);
      lastInfected = m;
    }
    const cr = lastDraw(draws[r]!);
    const va = 1 - missPow[ca]!;
    const vr = 1 - missPow[cr]!;
    sums[0]! += va;
    sums[1]! += va * va;
    sums[2]! += vr;
    sums[3]! += vr * vr;
    sums[4]! += va - vr;
    sums[5]! += (va - vr) ** 2;
  }
  return sums;
}
