/** What the `calc` commands share: how their sentences print numbers, and the --pens argument. */
import { parseIntegerOption } from './parseArgs.js';

/** Six significant digits for sentences; JSON carries full precision. */
export function short(value: number): string {
  return String(Number(value.toPrecision(6)));
}

export function plural(count: number, one: string, many: string): string {
  return `${count} ${count === 1 ? one : many}`;
}

/** --pens: a whole number of pens from 1, or (where allowed) inf for a large population. */
export function parsePens(raw: string | undefined, allowInfinite: boolean): number {
  if (allowInfinite && raw !== undefined && /^(inf|infinity|infinite)$/i.test(raw.trim())) return Infinity;
  return parseIntegerOption('--pens', raw, 1);
}
