/**
 * Rounds: a site's collections within the configured window form one round, numbered in date
 * order. A round opens on its first rope's date; a rope hung `windowDays` or more after that
 * opens the next round. Pure: the ropes come in, the rounds go out.
 */
import { differenceInCalendarDays, parseISO } from 'date-fns';

export interface DatedRope {
  sampleId: string;
  siteId: string;
  barnId: string;
  penId: string;
  hungOn: string;
}

export interface Round<R extends DatedRope = DatedRope> {
  siteId: string;
  /** 1-based, in date order. */
  number: number;
  /** Folder name: r01-2026-03-02 (number and first day), stable for a given set of ropes. */
  id: string;
  startOn: string;
  endOn: string;
  ropes: R[];
}

export function roundFolderName(number: number, startOn: string): string {
  return `r${String(number).padStart(2, '0')}-${startOn}`;
}

/** Groups one site's ropes into rounds. Ropes of other sites are an error: call per site. */
export function formRounds<R extends DatedRope>(siteId: string, ropes: readonly R[], windowDays: number): Round<R>[] {
  if (!Number.isInteger(windowDays) || windowDays < 1) throw new RangeError(`windowDays must be a positive integer, got ${windowDays}`);
  const sorted = [...ropes].sort((a, b) => (a.hungOn < b.hungOn ? -1 : a.hungOn > b.hungOn ? 1 : a.sampleId < b.sampleId ? -1 : 1));
  const rounds: Round<R>[] = [];
  let current: Round<R> | undefined;
  let currentStart: Date | undefined;
  for (const rope of sorted) {
    if (rope.siteId !== siteId) throw new RangeError(`rope ${rope.sampleId} belongs to site ${rope.siteId}, not ${siteId}`);
    const date = parseISO(rope.hungOn);
    if (!current || !currentStart || differenceInCalendarDays(date, currentStart) >= windowDays) {
      const number = rounds.length + 1;
      current = { siteId, number, id: roundFolderName(number, rope.hungOn), startOn: rope.hungOn, endOn: rope.hungOn, ropes: [] };
      currentStart = date;
      rounds.push(current);
    }
    current.ropes.push(rope);
    current.endOn = rope.hungOn;
  }
  return rounds;
}

/** Whole days between two ISO dates (b - a). */
export function daysBetween(a: string, b: string): number {
  return differenceInCalendarDays(parseISO(b), parseISO(a));
}
