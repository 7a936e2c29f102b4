/**
 * Onward spread from known positives: where will infection be by the next round? Simulated
 * outbreaks that start from the positive pens and run a few steps of the same chain-binomial
 * model as simulateOutbreaks; each realisation keeps only the pens newly infected, which are the
 * ones a follow-up rope could still find. The result plugs into detectionProbability, so the
 * gain of a set of follow-up ropes is simulated on common outbreaks (a coverage-type objective:
 * monotone and submodular, so greedy selection is within 1 - 1/e of the best set;
 * Nemhauser, Wolsey & Fisher 1978).
 */
import type { Rng } from '../util/random.js';
import type { Outbreaks } from './spreadDetection.js';
import type { SpatialWeights } from './weights.js';

export interface OnwardSpreadOptions {
  /** Pens known to be infected now (ids of the graph). */
  seeds: readonly string[];
  /** Discrete steps to simulate (about one round interval), integer >= 1. */
  steps: number;
  /** Per-step transmission over one unit of weight, in [0, 1]. */
  beta: number;
  /** Per-step background infection of any pen, in [0, 1]. */
  background: number;
  realisations: number;
  rng: Rng;
}

/**
 * Simulates onward spread from `seeds` for `steps` steps:
 * P(pen j infected next step) = 1 - (1 - background) prod_{infected i ~ j} (1 - min(1, beta w_ij)).
 * In the returned outbreaks, `infected` is the number of seed pens and each realisation's bits
 * mark the pens infected after the seeds (never the seeds themselves).
 * @throws RangeError on an unknown seed or bad options.
 * @see Bailey N.T.J. (1975) The Mathematical Theory of Infectious Diseases, ch. 14 (chain binomial).
 */
export function simulateOnwardSpread(graph: SpatialWeights, options: OnwardSpreadOptions): Outbreaks {
  const n = graph.ids.length;
  const index = new Map(graph.ids.map((id, i) => [id, i] as const));
  const seeds = options.seeds.map((id) => {
    const i = index.get(id);
    if (i === undefined) throw new RangeError(`\`seeds\` must name pens of the graph, got ${id}`);
    return i;
  });
  for (const [name, value] of [
    ['beta', options.beta],
    ['background', options.background],
  ] as const) {
    if (!(value >= 0 && value <= 1)) throw new RangeError(`\`${name}\` must be a number in [0, 1], got ${value}`);
  }
  if (!Number.isInteger(options.steps) || options.steps < 1)
    throw new RangeError(`\`steps\` must be an integer >= 1, got ${options.steps}`);
  if (!Number.isInteger(options.realisations) || options.realisations < 1)
    throw new RangeError(`\`realisations\` must be an integer >= 1, got ${options.realisations}`);
  const words = Math.ceil(n / 32);
  const bits = new Uint32Array(words * options.realisations);
  const state = new Uint8Array(n);
  const escapeProbability = new Float64Array(n);
  const transmit = Float64Array.from(graph.weights, (w) => 1 - Math.min(1, options.beta * w));
  for (let r = 0; r < options.realisations; r++) {
    state.fill(0);
    for (const i of seeds) state[i] = 1;
    for (let step = 0; step < options.steps; step++) {
      escapeProbability.fill(1 - options.background);
      for (let i = 0; i < n; i++) {
        if (!state[i]) continue;
        for (let a = graph.offsets[i]!; a < graph.offsets[i + 1]!; a++)
          escapeProbability[graph.neighbours[a]!]! *= transmit[a]!;
      }
      const fresh: number[] = [];
      for (let j = 0; j < n; j++) if (!state[j] && options.rng() >= escapeProbability[j]!) fresh.push(j);
      for (const j of fresh) state[j] = 2;
    }
    const base = r * words;
    for (let i = 0; i < n; i++) if (state[i] === 2) bits[base + (i >>> 5)]! |= 1 << (i & 31);
  }
  return Object.freeze({
    ids: graph.ids,
    index,
    realisations: options.realisations,
    infected: seeds.length,
    words,
    bits,
    reseeded: 0,
    model: { beta: options.beta, background: options.background, graph: graph.description },
  });
}
