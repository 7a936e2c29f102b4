/**
 * Seeded pseudo-random numbers. Every Monte Carlo result in ropewatch takes `rng` as a
 * parameter and writes its seed into the output, so a run can be repeated exactly.
 */
export type Rng = () => number;

/**
 * Mulberry32: a small 32-bit generator with a full 2^32 period, uniform on [0, 1).
 * Adequate for permutation tests and spread simulations (not for cryptography).
 * @see Tommy Ettinger, "Mulberry32" (public domain, 2017).
 */
export function seededRng(seed: number): Rng {
  if (!Number.isInteger(seed)) throw new RangeError(`seed must be an integer, got ${seed}`);
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
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
