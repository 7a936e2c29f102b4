/**
 * Seeded pseudo-random numbers. Every Monte Carlo result in ropewatch takes `rng` as a
 * parameter and writes its seed into the output, so a run can be repeated exactly.
 */
export type Rng = () => number;

/**
 * Mulberry32: a small 32-bit generator with a full 2^32 period, uniform on [0, 1).
 * Adequate for permutation tests and spread simulations (not for cryptography).
 * The generator also carries `fill` (see {@link fillUniform}): the next draws written into an
 * array in one call, the same numbers in the same order as that many calls would give.
 * @see Tommy Ettinger, "Mulberry32" (public domain, 2017).
 */
export function seededRng(seed: number): Rng {
  if (!Number.isInteger(seed)) throw new RangeError(`seed must be an integer, got ${seed}`);
  let state = seed >>> 0;
  const next = () => {
    state = (state + 0x6d2b79f5) >>> 0;
    return mulberry32Output(state);
  };
  const fill = (into: Float64Array, count: number) => {
    let s = state;
    for (let i = 0; i < count; i++) {
      s = (s + 0x6d2b79f5) >>> 0;
      into[i] = mulberry32Output(s);
    }
    state = s;
  };
  return Object.assign(next, { fill });
}

/** The output of Mulberry32 for one state: a uniform number in [0, 1). */
function mulberry32Output(state: number): number {
  let t = Math.imul(state ^ (state >>> 15), state | 1);
  t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
  return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
}

/**
 * Writes the next `count` draws of `rng` into `into[0 .. count)`, in the order `count` calls of
 * `rng()` would give them, and advances `rng` by exactly that many. A generator from
 * {@link seededRng} does it in one call: a Monte Carlo kernel draws through here in its hot loop,
 * because a draw returned from a closure call that the engine does not inline is a boxed number
 * (one heap allocation per draw); any other `rng` is called once per draw.
 * @param count integer in [0, into.length].
 */
export function fillUniform(rng: Rng, into: Float64Array, count: number): void {
  if (!Number.isInteger(count) || count < 0 || count > into.length)
    throw new RangeError(`\`count\` must be an integer in [0, ${into.length}], got ${count}`);
  const bulk = (rng as Rng & { fill?: (into: Float64Array, count: number) => void }).fill;
  if (bulk !== undefined) bulk(into, count);
  else for (let i = 0; i < count; i++) into[i] = rng();
}

/** A uniform integer in [0, n). */
export function randomInt(rng: Rng, n: number): number {
  return Math.floor(rng() * n);
}

/** Derives a child seed so that independent streams (per barn, per site) stay reproducible. */
export function deriveSeed(seed: number, ...parts: (string | number)[]): number {
  let h = (seed ^ 0x9e3779b9) >>> 0;
  for (const part of parts) {
    const text = String(part);
    for (let i = 0; i < text.length; i++) {
      h = Math.imul(h ^ text.charCodeAt(i), 0x01000193) >>> 0;
    }
    h = Math.imul(h ^ 0x2f, 0x01000193) >>> 0;
  }
  return h;
}
