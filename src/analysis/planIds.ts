/**
 * Sample and pool IDs of a planned round: the IDs an earlier version of the same plan gave keep
 * their pens (a remade plan does not relabel tubes), and routine ropes go into pools when the
 * program pools them. Pure.
 */
import type { Site } from '../config/types.js';
import { formatSampleId, isWriteFriendlyCheck, parseSampleId, type PlanRow } from '../plan/index.js';
import type { PooledPlanRow } from './planTypes.js';

/** Relabels rows with the IDs an earlier version of this plan gave the same pens; new pens get fresh, unused sequences. */
export function keepEarlierIds(
  rows: readonly PlanRow[],
  site: Site,
  round: number,
  existing: ReadonlyMap<string, string> | undefined,
): PlanRow[] {
  if (!existing || existing.size === 0) return [...rows];
  const earlierIds = new Set(existing.values());
  const withEarlier = rows.map((row) => ({ row, earlier: existing.get(`${row.barnId}/${row.penId}`) }));
  const taken = new Set(withEarlier.flatMap((entry) => (entry.earlier ? [entry.earlier] : [])));
  let sequence = 0;
  const freshId = (): string => {
    for (;;) {
      sequence++;
      const id = formatSampleId({ siteCode: site.code, round, sequence });
      if (isWriteFriendlyCheck(id) && !taken.has(id) && !earlierIds.has(id)) return id;
    }
  };
  return withEarlier.map(({ row, earlier }) => {
    const sampleId = earlier ?? (taken.has(row.sampleId) || earlierIds.has(row.sampleId) ? freshId() : row.sampleId);
    taken.add(sampleId);
    return { ...row, sampleId };
  });
}

/**
 * Puts each barn's routine ropes, in walking order, into pools of `poolSize` (the last pool of a
 * barn takes what is left; a pool of one is no pool). Retest and follow-up ropes are tested on
 * their own: their point is to name the pen. Pool IDs have the sample-ID grammar with its check
 * character (ISO/IEC 7064 MOD 37-2), on sequences after every rope's, so a mistyped pool ID is
 * caught on ingest like a mistyped sample ID.
 */
export function assignPools(
  rows: readonly PlanRow[],
  site: Site,
  round: number,
  poolSize: number,
  existing: ReadonlyMap<string, string> | undefined,
): PooledPlanRow[] {
  if (poolSize < 2) return [...rows];
  const taken = new Set([...rows.map((row) => row.sampleId), ...(existing?.values() ?? [])]);
  let sequence = 0;
  for (const id of taken) {
    const parsed = parseSampleId(id);
    if (parsed.ok) sequence = Math.max(sequence, parsed.sequence);
  }
  const nextPoolId = (): string | undefined => {
    while (sequence < 999) {
      sequence++;
      const id = formatSampleId({ siteCode: site.code, round, sequence });
      if (isWriteFriendlyCheck(id) && !taken.has(id)) return id;
    }
    return undefined;
  };
  const poolOf = new Map<PlanRow, string>();
  for (const barn of site.barns) {
    const routine = rows.filter((row) => row.barnId === barn.id && row.reason === 'routine');
    for (let start = 0; start + 1 < routine.length; start += poolSize) {
      const members = routine.slice(start, start + poolSize);
      if (members.length < 2) break;
      const poolId = nextPoolId();
      // Out of sequences (999 per round): the rest are tested on their own.
      if (poolId === undefined)
        return rows.map((row) => (poolOf.has(row) ? { ...row, poolId: poolOf.get(row)! } : row));
      for (const member of members) poolOf.set(member, poolId);
    }
  }
  return rows.map((row) => (poolOf.has(row) ? { ...row, poolId: poolOf.get(row)! } : row));
}
