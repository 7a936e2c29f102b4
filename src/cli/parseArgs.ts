import { UsageError } from './io.js';

/** Parses an option value as a finite number, naming the option when it is not one. */
export function parseNumberOption(option: string, raw: string | undefined): number {
  if (raw === undefined || raw.trim() === '') throw new UsageError(`${option} needs a number`);
  const value = Number(raw);
  if (!Number.isFinite(value)) throw new UsageError(`${option} must be a number, got ${JSON.stringify(raw)}`);
  return value;
}

/** Parses a whole number option, optionally bounded. */
export function parseIntegerOption(
  option: string,
  raw: string | undefined,
  min = 0,
  max = Number.MAX_SAFE_INTEGER,
): number {
  const value = parseNumberOption(option, raw);
  if (!Number.isInteger(value) || value < min || value > max) {
    throw new UsageError(`${option} must be a whole number in [${min}, ${max}], got ${JSON.stringify(raw)}`);
  }
  return value;
}

/** Parses a probability in [0, 1]. */
export function parseProbabilityOption(option: string, raw: string | undefined): number {
  const value = parseNumberOption(option, raw);
  if (value < 0 || value > 1)
    throw new UsageError(`${option} must be a probability in [0, 1], got ${JSON.stringify(raw)}`);
  return value;
}

/** Parses a comma-separated list of probabilities. */
export function parseProbabilityList(option: string, raw: string | undefined): number[] {
  if (raw === undefined || raw.trim() === '')
    throw new UsageError(`${option} needs a comma-separated list of probabilities`);
  return raw.split(',').map((part, index) => parseProbabilityOption(`${option} item ${index + 1}`, part.trim()));
}
