/**
 * Round frequency: when the next round is due, whether it is overdue, and what a negative
 * round on time is worth against a missed one, in probability of freedom (Martin, Cameron & Greiner 2007, Prev Vet Med 79:71-97).
 */
import { addDays, differenceInCalendarDays, format, isValid, parseISO } from 'date-fns';
import { requireNumber } from '../stats/validate.js';

function parseDay(name: string, text: string): Date {
  const date = /^\d{4}-\d{2}-\d{2}$/.test(text) ? parseISO(text) : new Date(NaN);
  if (!isValid(date)) throw new RangeError(`\`${name}\` must be a date yyyy-mm-dd, got ${JSON.stringify(text)}`);
  return date;
}

export interface RoundDue {
  /** yyyy-mm-dd */
  dueDate: string;
  /** Calendar days from today to the due date (negative when overdue). */
  daysUntilDue: number;
  overdue: boolean;
  daysOverdue: number;
}

/**
 * Due date = last round date + interval days (calendar days, so a change of summer time does not
 * move it); overdue when today is after the due date.
 * @param lastRoundDate yyyy-mm-dd; @param intervalDays integer >= 1; @param today yyyy-mm-dd (injected clock)
 * @throws RangeError for a malformed date or an interval that is not a positive integer
 * @example roundDue('2026-03-02', 14, '2026-03-20') // { dueDate: '2026-03-16', overdue: true, daysOverdue: 4 }
 */
export function roundDue(lastRoundDate: string, intervalDays: number, today: string): RoundDue {
  const last = parseDay('lastRoundDate', lastRoundDate);
  const now = parseDay('today', today);
  if (!Number.isInteger(intervalDays) || intervalDays < 1) {
    throw new RangeError(`\`intervalDays\` must be an integer in [1, infinity), got ${intervalDays}`);
  }
  const due = addDays(last, intervalDays);
  const daysUntilDue = differenceInCalendarDays(due, now);
  return {
    dueDate: format(due, 'yyyy-MM-dd'),
    daysUntilDue,
    overdue: daysUntilDue < 0,
    daysOverdue: Math.max(0, -daysUntilDue),
  };
}

/**
 * Posterior probability of freedom after a negative round of sensitivity SSe:
 * PF' = PF / (1 - SSe (1 - PF)).
 * @param prior PF in [0, 1]; @param sensitivity SSe in [0, 1]
 * @throws RangeError outside those domains
 * @see Martin PAJ, Cameron AR, Greiner M (2007) Demonstrating freedom from disease using multiple
 *   complex data sources 1. Prev Vet Med 79:71-97.
 * @example freedomAfterNegative(0.495, 0.8) // 0.8305369
 */
export function freedomAfterNegative(prior: number, sensitivity: number): number {
  requireNumber('prior', prior, 0, 1);
  requireNumber('sensitivity', sensitivity, 0, 1);
  const denominator = 1 - sensitivity * (1 - prior);
  // prior = 0 and SSe = 1 is 0/0: a perfect round cannot be negative in an infected herd; report 0.
  return denominator > 0 ? prior / denominator : 0;
}

/**
 * Freedom before the next round, lowered by the chance of introduction: PF (1 - PI)^(days / D),
 * where PI is the probability of introduction per interval D, scaled to `days` as
 * 1 - (1 - PI)^(days / D).
 * @throws RangeError for freedom or PI outside [0, 1], days < 0, or D <= 0
 * @see Martin, Cameron & Greiner (2007) Prev Vet Med 79:71-97.
 */
export function discountForIntroduction(
  freedom: number,
  introductionPerInterval: number,
  days: number,
  intervalDays: number,
): number {
  requireNumber('freedom', freedom, 0, 1);
  requireNumber('introductionPerInterval', introductionPerInterval, 0, 1);
  requireNumber('days', days, 0, Infinity, { range: '[0, infinity)' });
  requireNumber('intervalDays', intervalDays, 0, Infinity, { openMin: true, range: '(0, infinity)' });
  return freedom * (1 - introductionPerInterval) ** (days / intervalDays);
}

export interface OnTimeVersusMissed {
  /** Freedom at the due date if the round is done on time and negative. */
  onTime: number;
  /** Freedom at the due date with no round (only the introduction discount). */
  withoutRound: number;
  /** Freedom one interval later if the due round is missed and the next one is negative. */
  missed: number;
  /** onTime - missed: what skipping the round costs, in probability of freedom. */
  cost: number;
}

/**
 * A negative round on time versus a missed one: freedomAfter(D, SSe) against freedomAfter(2D,
 * SSe). By default freedomAfter(days, SSe) = PF' of the prior discounted over `days`
 * (Martin, Cameron & Greiner 2007); pass your own to use another freedom model.
 * @param input currentFreedom PF in [0, 1] (after the last round), roundSensitivity SSe in [0, 1],
 *   introductionPerInterval PI in [0, 1], intervalDays D > 0
 * @throws RangeError outside those domains
 * @see Martin, Cameron & Greiner (2007) Prev Vet Med 79:71-97.
 */
export function onTimeVersusMissed(input: {
  currentFreedom: number;
  roundSensitivity: number;
  introductionPerInterval: number;
  intervalDays: number;
  freedomAfter?: (daysElapsed: number, roundSensitivity: number) => number;
}): OnTimeVersusMissed {
  const discount = (days: number) =>
    discountForIntroduction(input.currentFreedom, input.introductionPerInterval, days, input.intervalDays);
  const freedomAfter = input.freedomAfter ?? ((days: number, sse: number) => freedomAfterNegative(discount(days), sse));
  requireNumber('roundSensitivity', input.roundSensitivity, 0, 1);
  const onTime = freedomAfter(input.intervalDays, input.roundSensitivity);
  const missed = freedomAfter(2 * input.intervalDays, input.roundSensitivity);
  const withoutRound = discount(input.intervalDays);
  for (const [name, v] of [
    ['onTime', onTime],
    ['missed', missed],
  ] as const)
    requireNumber(`freedomAfter (${name})`, v, 0, 1);
  return {
    onTime,
    withoutRound,
    missed,
    cost: onTime - missed,
  };
}
