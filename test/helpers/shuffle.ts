/** Shuffles for permutation tests (relabelling pens); the product itself never shuffles in place. */
import { randomInt, type Rng } from '../../src/util/random.js';

/** Fisher-Yates shuffle in place (Knuth 1969, The Art of Computer Programming vol. 2, Algorithm P). */
export function shuffleInPlace<T>(items: T[], rng: Rng): T[] {
  for (let i = items.length - 1; i > 0; i--) {
    const j = randomInt(rng, i + 1);
    const tmp = items[i]!;
    items[i] = items[j]!;
    items[j] = tmp;
  }
  return items;
}
