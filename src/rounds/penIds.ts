/**
 * The pens a barn's round sampled, in layout order (`BarnRound.pens`' ids), without reading the
 * pens themselves where they are not yet read: a round model kept from an earlier build reads a
 * barn's pens only when asked for them (src/report/keptRoundModels.ts), and registers their ids
 * here when it is read.
 */
import type { BarnRound } from './roundTypes.js';

const known = new WeakMap<BarnRound, readonly string[]>();

/** Records the ids of `barn`'s pens, read before its pens are. */
export function registerPenIds(barn: BarnRound, penIds: readonly string[]): void {
  known.set(barn, penIds);
}

export function penIdsOf(barn: BarnRound): string[] {
  const ids = known.get(barn);
  return ids === undefined ? barn.pens.map((pen) => pen.penId) : [...ids];
}
