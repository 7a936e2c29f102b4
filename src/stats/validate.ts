/**
 * Precondition checks shared by the statistics kernels. One grammar for every message:
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
 * Throws RangeError unless `value` is a finite number in [min, max] (closed, or open at either end).
 * @throws RangeError "`name` must be a number in (0, 1], got 1.5"
 */
export function requireNumber(
  name: string,
  value: number,
  min: number,
  max: number,
  { openMin = false, openMax = false }: { openMin?: boolean; openMax?: boolean } = {},
): void {
  const ok =
    typeof value === 'number' &&
    Number.isFinite(value) &&
    (openMin ? value > min : value >= min) &&
    (openMax ? value < max : value <= max);
  if (!ok) {
    const range = `${openMin ? '(' : '['}${min}, ${max}${openMax ? ')' : ']'}`;
    throw new RangeError(`\`${name}\` must be a number in ${range}, got ${shown(value)}`);
  }
}

/** Throws RangeError unless `value` is a probability in [0, 1]. */
export function requireProbability(name: string, value: number): void {
  requireNumber(name, value, 0, 1);
}
