/**
 * Rounds: a site's collections within the configured window form one round, numbered in date
 * order. A round opens on its first rope's date; a rope hung `windowDays` or more after that
 * opens the next round. Pure: the ropes come in, the rounds go out.
 */
import { addDays, differenceInCalendarDays, format, parseISO } from 'date-fns';

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
  if (!Number.isInteger(windowDays) || windowDays < 1)
    throw new RangeError(`windowDays must be a positive integer, got ${windowDays}`);
  const sorted = [...ropes].sort((a, b) =>
    a.hungOn < b.hungOn ? -1 : a.hungOn > b.hungOn ? 1 : a.sampleId < b.sampleId ? -1 : 1,
  );
  const rounds: Round<R>[] = [];
  let current: Round<R> | undefined;
  let currentStart: Date | undefined;
  for (const rope of sorted) {
    if (rope.siteId !== siteId)
      throw new RangeError(`rope ${rope.sampleId} belongs to site ${rope.siteId}, not ${siteId}`);
    const date = parseISO(rope.hungOn);
    if (!current || !currentStart || differenceInCalendarDays(date, currentStart) >= windowDays) {
      const number = rounds.length + 1;
      current = {
        siteId,
        number,
        id: roundFolderName(number, rope.hungOn),
        startOn: rope.hungOn,
        endOn: rope.hungOn,
        ropes: [],
      };
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

/**
 * Where a round stands: its ropes are out and no result is back yet (`awaiting-results`), some
 * are back and the others are not yet due (`partial`), or it is closed (`complete`): every rope
 * has a result, or the grace period after its last rope date has passed, and a rope still
 * without a result is missing.
 */
export type RoundState = 'awaiting-results' | 'partial' | 'complete';

/** The last day a round's results are awaited: its last rope date plus the program's grace days. */
export function resultsDueOn(endOn: string, graceDays: number): string {
  if (!Number.isInteger(graceDays) || graceDays < 0)
    throw new RangeError(`\`graceDays\` must be a non-negative integer, got ${graceDays}`);
  return format(addDays(parseISO(endOn), graceDays), 'yyyy-MM-dd');
}

/**
 * The state of a round with `ropes` ropes out (on sheets or planned), `returned` of them with a
 * result, results due by `dueOn`, on the day `today` (ISO dates). Without a clock (`today`
 * undefined) a round is judged closed: nothing is awaited any more.
 */
export function roundState(ropes: number, returned: number, dueOn: string, today: string | undefined): RoundState {
  if (!Number.isInteger(ropes) || ropes < 0)
    throw new RangeError(`\`ropes\` must be a non-negative integer, got ${ropes}`);
  if (!Number.isInteger(returned) || returned < 0 || returned > ropes)
    throw new RangeError(`\`returned\` must be an integer in [0, ${ropes}], got ${returned}`);
  if (returned === ropes || today === undefined || today > dueOn) return 'complete';
  return returned === 0 ? 'awaiting-results' : 'partial';
}

/**
 * The round a planned rope belongs to: the one a rope hung on its due date would have joined
 * (the due date and the round's ropes all within `windowDays`, as formRounds groups them),
 * the nearest by start date when two would; -1 when none would (the round is not out yet, or
 * was hung far from the plan's date). Round numbers are never used: a late rope sheet renumbers
 * rounds, and a plan is for a date.
 */
export function roundForDueDate(
  dueOn: string,
  rounds: readonly Pick<Round, 'startOn' | 'endOn'>[],
  windowDays: number,
): number {
  let best = -1;
  let bestDistance = Infinity;
  rounds.forEach((round, index) => {
    const first = dueOn < round.startOn ? dueOn : round.startOn;
    const last = dueOn > round.endOn ? dueOn : round.endOn;
    if (daysBetween(first, last) >= windowDays) return;
    const distance = Math.abs(daysBetween(round.startOn, dueOn));
    if (distance < bestDistance) {
      best = index;
      bestDistance = distance;
    }
  });
  return best;
}

/** The day of a clock reading (yyyy-MM-dd, local time), as rounds, plans and due dates count days. */
export function clockDay(now: Date): string {
  return format(now, 'yyyy-MM-dd');
}
