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

/**
 * Groups one site's ropes into rounds. Ropes of other sites are an error: call per site.
 * @param earlierRounds how many rounds come before these ropes: the first rope must be the first
 *   of a round (its number is earlierRounds + 1). A round opens on its first rope whatever came
 *   before, so the ropes from a round's first day on form the same rounds as the whole history.
 */
export function formRounds<R extends DatedRope>(
  siteId: string,
  ropes: readonly R[],
  windowDays: number,
  earlierRounds = 0,
): Round<R>[] {
  if (!Number.isInteger(windowDays) || windowDays < 1)
    throw new RangeError(`windowDays must be a positive integer, got ${windowDays}`);
  const sorted = [...ropes].sort((a, b) =>
    a.hungOn < b.hungOn ? -1 : a.hungOn > b.hungOn ? 1 : a.sampleId < b.sampleId ? -1 : 1,
  );
  const rounds: Round<R>[] = [];
  let current: Round<R> | undefined;
  for (const rope of sorted) {
    if (rope.siteId !== siteId)
      throw new RangeError(`rope ${rope.sampleId} belongs to site ${rope.siteId}, not ${siteId}`);
    // A rope of the day before (sorted by day) joins its round: only a new day can open one.
    const sameDay = current !== undefined && rope.hungOn === current.endOn;
    if (!current || (!sameDay && daysBetween(current.startOn, rope.hungOn) >= windowDays)) {
      const number = earlierRounds + rounds.length + 1;
      current = {
        siteId,
        number,
        id: roundFolderName(number, rope.hungOn),
        startOn: rope.hungOn,
        endOn: rope.hungOn,
        ropes: [],
      };
      rounds.push(current);
    }
    current.ropes.push(rope);
    current.endOn = rope.hungOn;
  }
  return rounds;
}

const ISO_DAY = /^(\d{4})-(\d{2})-(\d{2})$/;
const DAY_MS = 86_400_000;

/**
 * The day number (days since 1970-01-01) of a yyyy-MM-dd date of the years 1000 to 9999 that
 * exists in the calendar, else undefined. Date.UTC counts civil days whatever the time zone,
 * which is what date-fns' differenceInCalendarDays and addDays count for dates parsed at local
 * midnight; it reads no text beyond the three numbers, so a site's history is not parsed rope
 * by rope.
 */
function civilDay(iso: string): number | undefined {
  const parts = ISO_DAY.exec(iso);
  if (parts === null) return undefined;
  const year = Number(parts[1]);
  const month = Number(parts[2]);
  const day = Number(parts[3]);
  if (year < 1000 || month < 1 || month > 12 || day < 1) return undefined;
  const time = Date.UTC(year, month - 1, day);
  // Day 31 of a 30-day month (or 29 February of a common year) rolls over into the next month.
  return new Date(time).getUTCDate() === day ? time / DAY_MS : undefined;
}

/** Whole days between two ISO dates (b - a); NaN when either is not a date. */
export function daysBetween(a: string, b: string): number {
  const from = civilDay(a);
  const to = civilDay(b);
  if (from !== undefined && to !== undefined) return to - from;
  return differenceInCalendarDays(parseISO(b), parseISO(a));
}

/** The ISO date `days` days after `iso` (throws a RangeError when `iso` is not a date). */
export function addDaysIso(iso: string, days: number): string {
  const from = civilDay(iso);
  if (from !== undefined && Number.isInteger(days)) {
    const shifted = new Date((from + days) * DAY_MS).toISOString();
    if (/^\d{4}-/.test(shifted)) return shifted.slice(0, 10);
  }
  return format(addDays(parseISO(iso), days), 'yyyy-MM-dd');
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
  return addDaysIso(endOn, graceDays);
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
  // A round starting `windowDays` or more from the due date cannot hold it (the span from one to
  // the other alone is that long): compared as text first, so a long history costs little.
  const range =
    civilDay(dueOn) === undefined ? undefined : [addDaysIso(dueOn, -windowDays), addDaysIso(dueOn, windowDays)];
  rounds.forEach((round, index) => {
    if (range !== undefined && (round.startOn <= range[0]! || round.startOn >= range[1]!)) return;
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
