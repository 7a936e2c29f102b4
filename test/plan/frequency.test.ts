import { freedomForecastText } from '../../src/report/planWording.js';
import { describe, expect, it } from 'vitest';
import { discountForIntroduction, freedomAfterNegative, onTimeVersusMissed, roundDue } from '../../src/plan/index.js';
import { expectClose } from '../helpers/expectClose.js';

describe('round due dates', () => {
  it('adds the interval in calendar days and flags an overdue round', () => {
    // By hand: 2 March + 14 days = 16 March; 20 March is 4 days later.
    expect(roundDue('2026-03-02', 14, '2026-03-20')).toEqual({
      dueDate: '2026-03-16',
      daysUntilDue: -4,
      overdue: true,
      daysOverdue: 4,
    });
    // By hand: 2028 is a leap year, 20 Feb + 14 = 5 March (29 days in February).
    expect(roundDue('2028-02-20', 14, '2028-03-01')).toEqual({
      dueDate: '2028-03-05',
      daysUntilDue: 4,
      overdue: false,
      daysOverdue: 0,
    });
    expect(roundDue('2026-12-25', 7, '2027-01-01').overdue).toBe(false); // due today is not overdue
  });

  it('rejects malformed dates and intervals', () => {
    expect(() => roundDue('03/02/2026', 14, '2026-03-20')).toThrow(
      '`lastRoundDate` must be a date yyyy-mm-dd, got "03/02/2026"',
    );
    expect(() => roundDue('2026-02-30', 14, '2026-03-20')).toThrow(RangeError);
    expect(() => roundDue('2026-03-02', 0, '2026-03-20')).toThrow(
      '`intervalDays` must be an integer in [1, infinity), got 0',
    );
  });
});

describe('freedom on time versus a missed round', () => {
  it('matches the freedom update check value worked by hand', () => {
    // Martin, Cameron & Greiner 2007, Prev Vet Med 79:71-97 (by hand): SSe=0.8, PI=0.01, prior 0.5, discount first -> 0.495, 0.8305369.
    const prior = discountForIntroduction(0.5, 0.01, 14, 14);
    expectClose(prior, 0.495, { rel: 1e-14 }, 'prior 0.5 PI 0.01 one interval');
    expectClose(freedomAfterNegative(prior, 0.8), 0.8305369, { abs: 5e-8 }, 'posterior SSe 0.8');
  });

  it('scales the introduction probability to the days elapsed', () => {
    // By hand: half an interval leaves 1 - (1 - PI)^(1/2) chance of introduction.
    expectClose(discountForIntroduction(1, 0.19, 7, 14), 0.9, { rel: 1e-14 }, 'PI 0.19 over half an interval');
  });

  it('shows what a missed round costs', () => {
    const result = onTimeVersusMissed({
      currentFreedom: 0.5,
      roundSensitivity: 0.8,
      introductionPerInterval: 0.01,
      intervalDays: 14,
    });
    expectClose(result.onTime, 0.8305369, { abs: 5e-8 }, 'on time (check by hand)');
    expectClose(result.withoutRound, 0.495, { rel: 1e-14 }, 'no round');
    // By hand: prior 0.5 * 0.99^2 = 0.49005; 0.49005 / (1 - 0.8 * 0.50995) = 0.8278 (a round later).
    expectClose(result.missed, 0.49005 / (1 - 0.8 * 0.50995), { rel: 1e-12 }, 'missed, negative a round later');
    expect(result.cost).toBeGreaterThan(0);
    expect(freedomForecastText(result)).toContain('83.1%');
  });

  it('uses an injected freedom model when one is given', () => {
    const result = onTimeVersusMissed({
      currentFreedom: 0.5,
      roundSensitivity: 0.8,
      introductionPerInterval: 0.01,
      intervalDays: 14,
      freedomAfter: (days) => (days <= 14 ? 0.9 : 0.7),
    });
    expect([result.onTime, result.missed]).toEqual([0.9, 0.7]);
    expectClose(result.cost, 0.2, { abs: 1e-15 }, 'injected');
  });
});
