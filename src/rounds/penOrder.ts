/** Orders within a round: a pen's place in its barn's layout, text order, grouping by a key. Pure. */
import type { Barn } from '../config/types.js';

/** A pen's index in its barn's layout order (pens are listed row by row along the alley). */
export function layoutOrder(barn: Barn, penId: string): number {
  const pen = barn.penById.get(penId.toUpperCase())!;
  return pen.row * barn.layout.pensPerRow + pen.position;
}

/** A pen's layout order, or after every pen of the layout when the layout does not have it. */
export function penOrder(barn: Barn, penId: string): number {
  return barn.penById.has(penId.toUpperCase()) ? layoutOrder(barn, penId) : Number.MAX_SAFE_INTEGER;
}

export function groupBy<T>(items: readonly T[], key: (item: T) => string): Map<string, T[]> {
  const groups = new Map<string, T[]>();
  for (const item of items) {
    const list = groups.get(key(item));
    if (list) list.push(item);
    else groups.set(key(item), [item]);
  }
  return groups;
}

export const compareText = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);
