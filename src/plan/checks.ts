/**
 * Precondition checks shared by the planner kernels, so every RangeError reads the same:
 * "`ropes` must be an integer in [0, pens], got 40".
 */

/** Throws unless `value` is an integer in [min, max]; `range` is the bracket as the message shows it. */
export function requireInteger(name: string, value: number, min: number, max: number, range?: string): void {
  if (!Number.isInteger(value) || value < min || value > max) {
    throw new RangeError(`\`${name}\` must be an integer in ${range ?? `[${min}, ${max}]`}, got ${value}`);
  }
}

/** Throws unless `value` is a finite number in [min, max] (open ends when the flags say so). */
export function requireNumber(
  name: string,
  value: number,
  min: number,
  max: number,
  options: { openMin?: boolean; openMax?: boolean; range?: string } = {},
): void {
  const belowMin = options.openMin ? value <= min : value < min;
  const aboveMax = options.openMax ? value >= max : value > max;
  if (Number.isNaN(value) || belowMin || aboveMax || (!Number.isFinite(value) && Number.isFinite(max))) {
    const range = options.range ?? `${options.openMin ? '(' : '['}${min}, ${max}${options.openMax ? ')' : ']'}`;
    throw new RangeError(`\`${name}\` must be a number in ${range}, got ${value}`);
  }
}

/** Throws unless a probability returned by an injected model is a number in [0, 1]. */
export function requireProbability(name: string, value: number): number {
  if (typeof value !== 'number' || Number.isNaN(value) || value < 0 || value > 1) {
    throw new RangeError(`\`${name}\` must return a probability in [0, 1], got ${value}`);
  }
  return value;
}

/**
 * Slack for comparing a computed probability with a target such as 0.95 or 0.99: the exact
 * value 1 - 0.1^2 evaluates to 0.9899999999999999 in binary floating point, and a planner that
 * then asks for a third round is wrong for the user.
 */
export const TARGET_SLACK = 1e-12;
