/**
 * What a mapped record becomes: a lab result row, a rope row (both declared in
 * src/domain/records.ts, which the store reads too), or a refusal.
 */
import type { ResultRow, RopeLocation, RopeRow } from '../domain/records.js';
import type { RowRejection } from './errors.js';

export type { ResultRow, RopeLocation, RopeRow };

export type RowOutcome<T> = { ok: true; row: T } | { ok: false; rejection: RowRejection };
