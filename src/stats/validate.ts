/**
 * Precondition checks shared by the statistics and planning kernels. One grammar for every message:
 * "`sampled` must be an integer in [0, pens], got 40", so the CLI can pass them through unchanged.
 */

/** Formats a received value so that NaN, Infinity and non-numbers are visible in the message. */
function shown(value: unknown): string {
  if (typeof value === 'number') return String(value);
  return JSON.stringify(value) ?? String(value);
}

/**
 * Throws RangeError unless `value` is an integer in [min, max].
 * `range` is the bound as the reader should see it, e.g. "[0, pens]".
 * @throws RangeError "`name` must be an integer in range, got value"
 */
export function requireInteger(
  name: string,
  value: number,
  min: number,
  max: number,
  range = `[${min}, ${max}]`,
): void {
  if (typeof value !== 'number' || !Number.isInteger(value) || value < min || value > max) {
    throw new RangeError(`\`${name}\` must be an integer in ${range}, got ${shown(value)}`);
  }
}

/**
 * Throws RangeError unless `value` is a number in [min, max] (closed, or open at either end).
 * Infinite values pass only against an infinite, closed upper end (e.g. a doubling time of
 * infinity: no growth). `range` is the bound as the reader should see it, e.g. "(0, infinity)".
 * @throws RangeError "`name` must be a number in (0, 1], got 1.5"
 */
export function requireNumber(
  name: string,
  value: number,
  min: number,
  max: number,
  { openMin = false, openMax = false, range }: { openMin?: boolean; openMax?: boolean; range?: string } = {},
): void {
  const ok =
    typeof value === 'number' &&
    !Number.isNaN(value) &&
    (Number.isFinite(value) || !Number.isFinite(max)) &&
    (openMin ? value > min : value >= min) &&
    (openMax ? value < max : value <= max);
  if (!ok) {
    const shownRange = range ?? `${openMin ? '(' : '['}${min}, ${max}${openMax ? ')' : ']'}`;
    throw new RangeError(`\`${name}\` must be a number in ${shownRange}, got ${shown(value)}`);
  }
}

/** Throws RangeError unless `value` is a probability in [0, 1]. */
export function requireProbability(name: string, value: number): void {
  requireNumber(name, value, 0, 1);
}

/**
 * Throws RangeError unless a probability returned by an injected model (a `detect(n)`) is a
 * number in [0, 1]; returns it, so a call can sit inside an expression.
 * @throws RangeError "`detect` must return a probability in [0, 1], got 1.2"
 */
export function requireReturnedProbability(name: string, value: number): number {
  if (typeof value !== 'number' || Number.isNaN(value) || value < 0 || value > 1) {
    throw new RangeError(`\`${name}\` must return a probability in [0, 1], got ${shown(value)}`);
  }
  return value;
}

/**
 * Slack for comparing a computed probability with a target such as 0.95 or 0.99: the exact
 * value 1 - 0.1^2 evaluates to 0.9899999999999999 in binary floating point, and a planner that
 * then asks for a third round is wrong for the user.
 */
export const TARGET_SLACK = 1e-12;
