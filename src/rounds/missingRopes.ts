/**
 * Ropes without a result: planned ropes by the round their due date falls in, those of a barn
 * whose pen no other rope covered, and those whose result came back under a mistyped ID. Pure.
 */
import type { Barn, Site } from '../config/types.js';
import { roundForDueDate, type Round } from './rounds.js';
import { compareText, groupBy, penOrder } from './penOrder.js';
import type { MistypedInput, MistypedRope, PenRound, PlannedInput } from './roundTypes.js';
import { keptFor } from '../util/kept.js';

/**
 * Planned ropes without a result by the index of the round whose window holds their due date;
 * a planned rope that a sheet or a result placed is a rope of its own round already.
 * @param placed the sample IDs of every rope of the site
 * @param rounds every round of the site, or its earlier rounds' spans followed by those formed
 */
export function plannedByRound(
  site: Site,
  placed: ReadonlySet<string>,
  rounds: readonly Pick<Round, 'startOn' | 'endOn'>[],
  plannedWithoutResults: readonly PlannedInput[],
): Map<string, PlannedInput[]> {
  // A plan's ropes share its due date: each date's round is found once (the search scans every
  // round, and a long history has a plan per round still waiting for its results).
  const roundOfDay = new Map<string, string>();
  return groupBy(
    plannedWithoutResults.filter((rope) => !placed.has(rope.sampleId)),
    (rope) =>
      keptFor(roundOfDay, rope.dueOn, () => String(roundForDueDate(rope.dueOn, rounds, site.program.roundWindowDays))),
  );
}

/** The pen id as the barn's layout writes it (the rope's own when the layout lacks it). */
const layoutPenId = (barn: Barn, penId: string): string => barn.penById.get(penId.toUpperCase())?.id ?? penId;

/**
 * The barn's ropes planned for the round whose pen no rope returned a result for (none when the
 * barn stood empty); each is entered in `missingPen`.
 */
export function plannedMissingRopes(
  barn: Barn,
  empty: boolean,
  plannedHere: readonly PlannedInput[],
  pens: ReadonlyMap<string, PenRound>,
  missingPen: Map<string, string>,
): string[] {
  if (empty) return [];
  const ropes = plannedHere.filter(
    (rope) => rope.barnId === barn.id && !pens.get(layoutPenId(barn, rope.penId))?.returned,
  );
  for (const rope of ropes) missingPen.set(rope.sampleId, layoutPenId(barn, rope.penId));
  return ropes.map((rope) => rope.sampleId);
}

/**
 * A rope without a result whose planned ID a refused row most likely meant: its result came
 * back under a mistyped ID (ISO/IEC 7064 check character) and waits for a person to confirm it.
 * In layout pen order, then sample ID.
 */
export function mistypedRopes(
  barn: Barn,
  missing: readonly string[],
  missingPen: ReadonlyMap<string, string>,
  mistypedByMeant: ReadonlyMap<string, readonly MistypedInput[]>,
): MistypedRope[] {
  return [...new Set(missing)]
    .filter((sampleId) => mistypedByMeant.has(sampleId))
    .map((sampleId) => {
      const penId = missingPen.get(sampleId)!;
      return {
        sampleId,
        penId,
        side: barn.penById.get(penId.toUpperCase())?.rowLabel ?? '',
        refusals: mistypedByMeant.get(sampleId)!.map(({ written, fileName, line }) => ({ written, fileName, line })),
      };
    })
    .sort((a, b) => penOrder(barn, a.penId) - penOrder(barn, b.penId) || compareText(a.sampleId, b.sampleId));
}

/** The pen of each missing rope, by sample ID. */
export function missingPensOf(
  missingPen: ReadonlyMap<string, string>,
  missing: readonly string[],
): Record<string, string> {
  return Object.fromEntries(
    [...missingPen.entries()]
      .filter(([sampleId]) => missing.includes(sampleId))
      .sort((a, b) => compareText(a[0], b[0])),
  );
}
