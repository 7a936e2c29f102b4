/** A barn's tally per assay: pens by the class of the result standing for them, and their pools. Pure. */
import type { AssayTally, PenRound } from './roundTypes.js';

export function emptyTally(): AssayTally {
  return {
    positive: 0,
    suspect: 0,
    negative: 0,
    invalid: 0,
    positivePens: [],
    suspectPens: [],
    invalidPens: [],
    testedPens: [],
  };
}

/** Tallies the pens (in the order given) per assay; pools only where some pen's result is a pool's. */
export function tallyByAssay(penList: readonly PenRound[]): Record<string, AssayTally> {
  const byAssay: Record<string, AssayTally> = {};
  for (const pen of penList) {
    for (const result of Object.values(pen.results)) {
      const tally = (byAssay[result.assayId] ??= emptyTally());
      tally[result.resultClass]++;
      if (result.resultClass === 'positive') tally.positivePens.push(pen.penId);
      if (result.resultClass === 'suspect') tally.suspectPens.push(pen.penId);
      if (result.resultClass === 'invalid') tally.invalidPens.push(pen.penId);
      else tally.testedPens.push(pen.penId);
      const pool = result.pool;
      if (pool !== undefined) {
        const pools = (tally.pools ??= []);
        const entry = pools.find((candidate) => candidate.poolId === pool.poolId);
        if (entry) entry.pens.push(pen.penId);
        else pools.push({ poolId: pool.poolId, poolClass: pool.poolClass, pens: [pen.penId] });
        tally.positivePoolPens ??= [];
        if (pool.poolClass === 'positive') tally.positivePoolPens.push(pen.penId);
      }
    }
  }
  return byAssay;
}
