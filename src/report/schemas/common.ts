/**
 * Pieces the JSON outputs' schemas share. Each enumeration is checked against the type the code
 * uses (`sameType`), so that a new member in the code fails the compile until the schema has it.
 */
import { z } from 'zod';
import type { Measure } from '../../config/types.js';
import type { ResultClass } from '../../interpret/classify.js';
import type { RoundState } from '../../rounds/rounds.js';

/** True only when A and B are the same type (each assignable to the other). */
export type SameType<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
/** Compile-time check: `sameType<A, B>(true)` compiles only when A and B are the same type. */
export const sameType = <A, B>(ok: SameType<A, B>): SameType<A, B> => ok;

export const isoDate = z.string().regex(/^\d{4}-\d{2}-\d{2}$/);
/** An ISO 8601 date or an interval of two (`2026-08-03/2026-08-04`). */
export const isoTimestamp = z.string().regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}(\.\d+)?Z$/);
export const probability = z.number().min(0).max(1);
export const count = z.number().int().min(0);

export const resultClass = z.enum(['positive', 'suspect', 'negative', 'invalid']);
sameType<z.infer<typeof resultClass>, ResultClass>(true);
export const measure = z.enum(['ct', 'sp-ratio']);
sameType<z.infer<typeof measure>, Measure>(true);
export const roundState = z.enum(['awaiting-results', 'partial', 'complete']);
sameType<z.infer<typeof roundState>, RoundState>(true);

export const groupRef = z.object({
  id: z.string(),
  label: z.string(),
  placedOn: isoDate,
  closedOn: isoDate.nullable(),
});

/** A PCR assay's state by the program's clearance rule (src/analysis/barnStatus.ts). */
export const positiveState = z.discriminatedUnion('state', [
  z.object({ state: z.literal('positive'), sinceRound: count, negativeRoundsInARow: count }),
  z.object({ state: z.literal('clear'), clearedAtRound: count.nullable() }),
]);

export const siteRef = z.object({ id: z.string(), name: z.string() });
export const roundRef = z.object({ number: count, id: z.string(), startOn: isoDate, endOn: isoDate });

/** The numbers behind an alert: counts, probabilities, day counts or dates, by name. */
export const alertNumbers = z.record(z.string(), z.union([z.number(), z.string(), z.null()]));

/**
 * Compile-time check that every value of the code's type T is a valid input of the schema S:
 * `fits<RoundSummary, z.input<typeof roundSummary>>(true)` stops compiling when the code's type
 * gains a field the schema does not allow.
 */
export const fits = <T, S>(ok: [T] extends [S] ? true : false): boolean => ok;
