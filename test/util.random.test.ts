/**
 * The seeded generator: Mulberry32 (Tommy Ettinger, "Mulberry32", public domain, 2017), checked
 * against the algorithm written out below as a closure apart from src/util/random.ts (its
 * constants from memory), and fillUniform, which must give the same draws in the same order as
 * one call per draw.
 */
import { describe, expect, it } from 'vitest';
import { fillUniform, seededRng } from '../src/util/random.js';

/** Mulberry32 as a closure: the reference the generator is checked against (constants from memory). */
function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

describe('seededRng and fillUniform', () => {
  it('draws the Mulberry32 sequence, one call at a time', () => {
    for (const seed of [0, 1, 42, 0x7fffffff, 0xffffffff]) {
      const rng = seededRng(seed);
      const reference = mulberry32(seed);
      for (let i = 0; i < 1000; i++) expect(rng(), `seed ${seed} draw ${i}`).toBe(reference());
    }
  });

  it('fills the same draws in the same order as calls would, interleaved with calls, and advances by exactly the count', () => {
    const rng = seededRng(7);
    const reference = mulberry32(7);
    const buffer = new Float64Array(50);
    for (const count of [0, 1, 13, 50, 3, 0, 49]) {
      expect(rng(), `call before a fill of ${count}`).toBe(reference());
      fillUniform(rng, buffer, count);
      for (let i = 0; i < count; i++) expect(buffer[i], `fill of ${count}, draw ${i}`).toBe(reference());
    }
  });

  it('calls any other generator once per draw, in order', () => {
    let calls = 0;
    const counting = () => ++calls / 100;
    const buffer = new Float64Array(4);
    fillUniform(counting, buffer, 3);
    expect([...buffer]).toEqual([0.01, 0.02, 0.03, 0]);
    expect(calls).toBe(3);
  });

  it('refuses a count beyond the buffer or not a whole number', () => {
    const buffer = new Float64Array(2);
    expect(() => fillUniform(seededRng(1), buffer, 3)).toThrow(RangeError);
    expect(() => fillUniform(seededRng(1), buffer, 1.5)).toThrow(RangeError);
  });
});
