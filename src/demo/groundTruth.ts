/**
 * The demo's ground truth: which pens of Hollow Creek barn F1 are infected in each round, and
 * what a lab would measure on a rope from it (a Ct, an S/P) with the demo's rope sensitivities.
 * Invented values; draws come from the generator the caller passes.
 */
import type { Rng } from '../util/random.js';

/** PRRSV ground truth in Hollow Creek barn F1, by round index: the infected pens. */
const F1_INFECTED: readonly (readonly string[])[] = [
  [],
  [],
  ['A6'],
  ['A5', 'A6', 'A7', 'B6'],
  ['A4', 'A5', 'A6', 'A7', 'A8', 'B5', 'B6', 'B7'],
  ['A3', 'A4', 'A5', 'A6', 'A7', 'A8', 'A9', 'B4', 'B5', 'B6', 'B7', 'B8'],
  ['A2', 'A3', 'A4', 'A5', 'A6', 'A7', 'A8', 'A9', 'A11', 'B3', 'B4', 'B5', 'B6', 'B7', 'B8', 'B9'],
];

/** Mean Ct of an infected pen's oral fluid by rounds since infection (load peaks, then wanes). */
const CT_BY_AGE = [31.5, 26.5, 25.0, 27.5, 30.5];
/** Probability that the rope of an infected pen comes back positive (finisher pigs). */
const DEMO_ROPE_SENSITIVITY = 0.85;

function infectedAge(barnId: string, penId: string, roundIndex: number): number | undefined {
  if (barnId !== 'F1') return undefined;
  if (!F1_INFECTED[roundIndex]?.includes(penId)) return undefined;
  let first = roundIndex;
  while (first > 0 && F1_INFECTED[first - 1]!.includes(penId)) first--;
  return roundIndex - first;
}

function gaussian(rng: Rng): number {
  // Box-Muller; 1 - u keeps the logarithm finite.
  const u = 1 - rng();
  const v = rng();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}

const round1 = (value: number) => Math.round(value * 10) / 10;

/** Mean S/P of an infected pen's oral fluid by rounds since infection: none in the first round, then rising. */
const SP_BY_AGE = [null, 0.9, 1.6, 2.0] as const;
/** Probability that the rope of a pen with antibody comes back antibody positive. */
const DEMO_ANTIBODY_SENSITIVITY = 0.9;

/** What the ELISA would read on one rope: background without antibody, rising after infection. */
export function measureSp(rng: Rng, barnId: string, penId: string, roundIndex: number): number {
  const background = () => Math.round(Math.min(0.3, Math.max(-0.05, 0.06 + 0.05 * gaussian(rng))) * 100) / 100;
  const age = infectedAge(barnId, penId, roundIndex);
  const mean = age === undefined ? null : SP_BY_AGE[Math.min(age, SP_BY_AGE.length - 1)]!;
  if (mean === null || rng() >= DEMO_ANTIBODY_SENSITIVITY) return background();
  return Math.round(Math.max(0.45, mean + 0.25 * gaussian(rng)) * 100) / 100;
}

/** What a lab would measure on one rope, from the ground truth. */
export function measure(rng: Rng, barnId: string, penId: string, roundIndex: number): number | null {
  const age = infectedAge(barnId, penId, roundIndex);
  if (age === undefined) return null;
  if (rng() >= DEMO_ROPE_SENSITIVITY) return null;
  return round1(
    Math.min(39, Math.max(18, (CT_BY_AGE[Math.min(age, CT_BY_AGE.length - 1)] ?? 31) + 1.2 * gaussian(rng))),
  );
}
