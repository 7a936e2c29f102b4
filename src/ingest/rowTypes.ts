/**
 * What mapping one record gives: a row (a lab result row or a rope row, declared in
 * src/domain/records.ts, which the store reads too) or a refusal.
 */
import type { RowRejection } from './errors.js';

export type RowOutcome<T> = { ok: true; row: T } | { ok: false; rejection: RowRejection };
