/**
 * What a sample ID that fails its check character most likely meant, said in its refusal: the
 * planned IDs one keying error away (plannedIds.ts), narrowed to the round and site the ID as
 * written names, then to ropes still without a result. Pure: the planned ropes are passed in.
 */
import { CORRECTIONS_FILE } from '../config/load.js';
import type { PlannedRope } from '../domain/records.js';
import type { RowRejection } from './errors.js';
import { likelyMeantIds, type MeantId } from './plannedIds.js';
import { normaliseSampleId } from './recordCells.js';

/** The planned ropes a suggestion is drawn from (looked up on demand: refusals are few). */
export interface PlannedLookup {
  planned(): ReadonlyMap<string, PlannedRope>;
  /** True when the planned rope has no result yet. */
  awaiting(rope: PlannedRope): boolean;
}

/**
 * The planned ID a sample ID that fails its check character most likely meant: among the planned
 * IDs one keying error away (plannedIds.ts), those of the round and site the ID as written names,
 * then those whose rope has no result yet. Undefined when no planned ID is near.
 */
function meantFor(
  written: string,
  planned: ReadonlyMap<string, PlannedRope>,
  awaiting: (rope: PlannedRope) => boolean,
): { best: MeantId | undefined; all: MeantId[] } {
  const all = likelyMeantIds(written, (id) => planned.has(id));
  if (all.length <= 1) return { best: all[0], all };
  const roundAndSite = /^([A-Z0-9]{1,4}[A-Z][0-9]{2,4})-/.exec(written)?.[1];
  let narrowed =
    roundAndSite === undefined ? all : all.filter((candidate) => candidate.id.startsWith(`${roundAndSite}-`));
  if (narrowed.length === 0) narrowed = all;
  if (narrowed.length > 1) {
    const open = narrowed.filter((candidate) => awaiting(planned.get(candidate.id)!));
    if (open.length > 0) narrowed = open;
  }
  return { best: narrowed.length === 1 ? narrowed[0] : undefined, all };
}

/** Names the planned ID a mistyped one most likely meant, in the refusal's message and fields. */
export function withSuggestion(rejection: RowRejection, lookup: PlannedLookup, fileName: string): RowRejection {
  if (rejection.code !== 'bad-check-character' || rejection.value === undefined) return rejection;
  const planned = lookup.planned();
  const written = normaliseSampleId(rejection.value);
  const { best, all } = meantFor(written, planned, lookup.awaiting);
  if (best !== undefined) {
    const rope = planned.get(best.id)!;
    const how = best.kind === 'substitution' ? 'one character differs' : 'two neighbouring characters swapped';
    return {
      ...rejection,
      suggestedId: best.id,
      ...(all.length > 1 ? { candidateIds: all.map((candidate) => candidate.id) } : {}),
      message:
        `${rejection.message}; most likely ${best.id} (planned for ${rope.siteId} barn ${rope.barnId} pen ${rope.penId}, due ${rope.dueOn}; ${how}). ` +
        `If so, confirm it in ${CORRECTIONS_FILE} (written: ${written}, meant: ${best.id}, file: ${fileName}, line: ${rejection.line}) and ingest this file again`,
    };
  }
  if (all.length > 1) {
    return {
      ...rejection,
      candidateIds: all.map((candidate) => candidate.id),
      message: `${rejection.message}; planned IDs one keying error away: ${all.map((candidate) => candidate.id).join(', ')} (ask the lab or the barn which one the tube carries)`,
    };
  }
  return rejection;
}
