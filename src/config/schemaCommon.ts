/** Building blocks the configuration schemas share: probabilities, identifiers, pens and dates. */
import { z } from 'zod';

export const probability = z.number().min(0).max(1);
export const penId = z.string().min(1);
/** A pen as the layout names it, or its number unquoted (YAML reads `7` as a number): 7 is pen 07. */
export const penRef = z.union([penId, z.number().int().min(0)]);
export const identifier = z
  .string()
  .regex(/^[A-Za-z0-9][A-Za-z0-9_-]*$/, 'letters, digits, "-" and "_" only, starting with a letter or digit');

/** A calendar date written yyyy-MM-dd (YAML reads an unquoted 2026-03-02 as this text). */
export const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'a date written yyyy-MM-dd')
  .refine((text) => {
    const [year, month, day] = text.split('-').map(Number) as [number, number, number];
    // Gregorian leap years: divisible by 4, except centuries not divisible by 400.
    const leap = year % 4 === 0 && (year % 100 !== 0 || year % 400 === 0);
    const days = [31, leap ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][month - 1];
    return days !== undefined && day >= 1 && day <= days;
  }, 'not a day of the calendar');
