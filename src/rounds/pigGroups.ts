/**
 * Groups of pigs in barns run all-in/all-out: a barn is filled with one group on its placement
 * day and emptied on its close-out day, then cleaned and left empty until the next group is
 * placed (all-in/all-out: common practice, no source). Pure: which group a date belongs to,
 * whether a barn is empty on a date, and the configuration checks that make that answer unique.
 * Dates are yyyy-MM-dd, so comparing the text compares the days.
 */
import type { BarnGroup } from '../config/types.js';

/**
 * A barn on a date:
 * - `group`: the group in the barn (placement and close-out days included);
 * - `empty`: after a group's close-out and before the next placement: no pigs, nothing to find;
 * - `ungrouped`: the barn is not run by groups, or the date is before the first group listed
 *   (the configuration says nothing of the pigs then: they are treated as a barn without groups).
 */
export type BarnStatus =
  | { kind: 'group'; group: BarnGroup }
  | { kind: 'empty'; closed: BarnGroup; next: BarnGroup | null }
  | { kind: 'ungrouped' };

/** The groups in placement order (the configuration may list them in any order). */
export function inPlacementOrder(groups: readonly BarnGroup[]): BarnGroup[] {
  return [...groups].sort((a, b) => (a.placedOn < b.placedOn ? -1 : a.placedOn > b.placedOn ? 1 : 0));
}

/**
 * What a barn with these (checked, non-overlapping) groups holds on `date`. The groups come in
 * placement order, as the configuration stores them (`inPlacementOrder` at load): this runs once
 * per barn and round.
 */
export function barnStatusOn(groups: readonly BarnGroup[], date: string): BarnStatus {
  let closed: BarnGroup | null = null;
  for (const group of groups) {
    if (date < group.placedOn) return closed === null ? { kind: 'ungrouped' } : { kind: 'empty', closed, next: group };
    if (group.closedOn === null || date <= group.closedOn) return { kind: 'group', group };
    closed = group;
  }
  return closed === null ? { kind: 'ungrouped' } : { kind: 'empty', closed, next: null };
}

/** True when the barn is empty on `date`: a group was closed out and the next is not yet placed. */
export function isEmptyOn(groups: readonly BarnGroup[], date: string): boolean {
  return barnStatusOn(groups, date).kind === 'empty';
}

/** A problem with a barn's groups: the group's index in the configuration, its key, the detail. */
export interface GroupProblem {
  index: number;
  key: 'id' | 'placedOn' | 'closedOn';
  detail: string;
}

/**
 * Checks a barn's groups so that a date belongs to at most one: close-out on or after placement,
 * ids unique, and each group closed out before the next is placed (a barn holds one group at a
 * time). Groups are reported by their index as configured.
 */
export function groupProblems(groups: readonly BarnGroup[]): GroupProblem[] {
  const problems: GroupProblem[] = [];
  const seen = new Map<string, number>();
  groups.forEach((group, index) => {
    const earlier = seen.get(group.id.toUpperCase());
    if (earlier !== undefined)
      problems.push({
        index,
        key: 'id',
        detail: `group id ${group.id} is already used by groups[${earlier}] of this barn`,
      });
    else seen.set(group.id.toUpperCase(), index);
    if (group.closedOn !== null && group.closedOn < group.placedOn) {
      problems.push({
        index,
        key: 'closedOn',
        detail: `${group.closedOn} is before the group's placement on ${group.placedOn}`,
      });
    }
  });
  const ordered = groups
    .map((group, index) => ({ group, index }))
    .sort((a, b) =>
      a.group.placedOn < b.group.placedOn ? -1 : a.group.placedOn > b.group.placedOn ? 1 : a.index - b.index,
    );
  for (let i = 1; i < ordered.length; i++) {
    const before = ordered[i - 1]!;
    const after = ordered[i]!;
    if (before.group.closedOn === null) {
      problems.push({
        index: before.index,
        key: 'closedOn',
        detail: `is missing: group ${before.group.id} must be closed out before group ${after.group.id} is placed on ${after.group.placedOn} (a barn holds one group at a time)`,
      });
    } else if (after.group.placedOn <= before.group.closedOn) {
      problems.push({
        index: after.index,
        key: 'placedOn',
        detail: `${after.group.placedOn} overlaps group ${before.group.id} (placed ${before.group.placedOn}, closed out ${before.group.closedOn}): place a group after the day the one before it is closed out`,
      });
    }
  }
  return problems;
}

/** The group as outputs name it: its id, label, placement and close-out days. */
export interface GroupRef {
  id: string;
  label: string;
  placedOn: string;
  closedOn: string | null;
}

export function groupRef(group: BarnGroup): GroupRef {
  return { id: group.id, label: group.label, placedOn: group.placedOn, closedOn: group.closedOn };
}
