/**
 * How pages name a barn's group of pigs in a round (barns run all-in/all-out): "group Autumn
 * (G2, placed 2026-09-01)", "empty, no group", or nothing for a barn not run by groups.
 */
import type { GroupRef } from '../rounds/pigGroups.js';

export const EMPTY_BARN = 'empty, no group';

export function groupText(barn: { group: GroupRef | null; empty: boolean } | undefined): string {
  if (barn === undefined) return '';
  if (barn.empty) return EMPTY_BARN;
  if (barn.group === null) return '';
  const { id, label, placedOn, closedOn } = barn.group;
  return `group ${label === id ? id : `${label} (${id},`}${label === id ? ' (' : ' '}placed ${placedOn}${closedOn === null ? '' : `, closed out ${closedOn}`})`;
}
