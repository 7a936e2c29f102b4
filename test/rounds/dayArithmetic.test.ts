/**
 * Day arithmetic on ISO dates (src/rounds/rounds.ts: daysBetween, addDaysIso, and formRounds,
 * which reads every rope's date): checked against date-fns 4 (differenceInCalendarDays, addDays,
 * parseISO, format; a reference library from the registry) on seeded random dates, with dates
 * that do not exist and text that is not a date among them, in time zones with and without
 * daylight saving time (a local midnight that does not exist included: America/Sao_Paulo
 * before 2019 began its summer time at 00:00).
 */
import { addDays, differenceInCalendarDays, format, parseISO } from 'date-fns';
import { afterAll, describe, expect, it } from 'vitest';
import {
  addDaysIso,
  daysBetween,
  formRounds,
  roundFolderName,
  type DatedRope,
  type Round,
} from '../../src/rounds/rounds.js';
import { randomInt, seededRng, type Rng } from '../../src/util/random.js';

const ZONES = [
  'UTC',
  'Europe/Berlin',
  'America/Chicago',
  'America/Sao_Paulo',
  'Australia/Lord_Howe',
  'Pacific/Kiritimati',
];
const originalZone = process.env.TZ;
afterAll(() => {
  if (originalZone === undefined) delete process.env.TZ;
  else process.env.TZ = originalZone;
});

const pad = (value: number, digits: number) => String(value).padStart(digits, '0');

/** Mostly real days of 1990-2040, some impossible days (30 February, 31 April), some not dates at all. */
function randomDay(rng: Rng): string {
  const pick = rng();
  if (pick < 0.05)
    return ['2026-02-29', '2026-13-01', '2026-04-31', '2026-00-10', '0999-12-31', '2026-1-05', '', 'soon'][
      randomInt(rng, 8)
    ]!;
  const year = 1990 + randomInt(rng, 51);
  const month = 1 + randomInt(rng, 12);
  const day = 1 + randomInt(rng, pick < 0.1 ? 31 : 28);
  return `${pad(year, 4)}-${pad(month, 2)}-${pad(day, 2)}`;
}

/** date-fns' answer, or the error it throws. */
function dateFnsAdd(iso: string, days: number): string {
  try {
    return format(addDays(parseISO(iso), days), 'yyyy-MM-dd');
  } catch (error) {
    return `throws ${(error as Error).name}`;
  }
}

function ours(run: () => string): string {
  try {
    return run();
  } catch (error) {
    return `throws ${(error as Error).name}`;
  }
}

/** formRounds as it was written first: each rope's date parsed by date-fns and compared with the round's first. */
function referenceRounds(siteId: string, ropes: readonly DatedRope[], windowDays: number): Round[] {
  const sorted = [...ropes].sort((a, b) =>
    a.hungOn < b.hungOn ? -1 : a.hungOn > b.hungOn ? 1 : a.sampleId < b.sampleId ? -1 : 1,
  );
  const rounds: Round[] = [];
  let current: Round | undefined;
  let currentStart: Date | undefined;
  for (const rope of sorted) {
    const date = parseISO(rope.hungOn);
    if (!current || !currentStart || differenceInCalendarDays(date, currentStart) >= windowDays) {
      current = {
        siteId,
        number: rounds.length + 1,
        id: roundFolderName(rounds.length + 1, rope.hungOn),
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

describe.each(ZONES)('day arithmetic in time zone %s', (zone) => {
  it('daysBetween gives date-fns differenceInCalendarDays for 4,000 seeded pairs, NaN where either is not a date', () => {
    process.env.TZ = zone;
    const rng = seededRng(20260501);
    for (let i = 0; i < 4000; i++) {
      const a = randomDay(rng);
      const b = i % 10 === 0 ? a : randomDay(rng);
      const expected = differenceInCalendarDays(parseISO(b), parseISO(a));
      expect(daysBetween(a, b), `${a} -> ${b}`).toBe(expected);
    }
  });

  it('addDaysIso gives date-fns addDays then format for 4,000 seeded dates and steps, and throws where it throws', () => {
    process.env.TZ = zone;
    const rng = seededRng(7);
    for (let i = 0; i < 4000; i++) {
      const iso = randomDay(rng);
      const days = randomInt(rng, 400) - (i % 3 === 0 ? 200 : 0);
      expect(
        ours(() => addDaysIso(iso, days)),
        `${iso} + ${days}`,
      ).toBe(dateFnsAdd(iso, days));
    }
  });

  it('formRounds groups 300 seeded random ropes as a date-fns reference does, for windows of 1 to 9 days', () => {
    process.env.TZ = zone;
    const rng = seededRng(99);
    for (let trial = 0; trial < 20; trial++) {
      const start = Date.UTC(2024, randomInt(rng, 12), 1 + randomInt(rng, 28));
      const ropes: DatedRope[] = Array.from({ length: 300 }, (_, index) => ({
        sampleId: `S${pad(randomInt(rng, 1000), 4)}-${index}`,
        siteId: 'site',
        barnId: 'B1',
        penId: String(1 + randomInt(rng, 40)),
        hungOn: new Date(start + randomInt(rng, 200) * 86_400_000).toISOString().slice(0, 10),
      }));
      const windowDays = 1 + (trial % 9);
      expect(formRounds('site', ropes, windowDays), `trial ${trial}, window ${windowDays}`).toEqual(
        referenceRounds('site', ropes, windowDays),
      );
    }
  });
});
