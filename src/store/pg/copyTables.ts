/**
 * The tables a store copy carries (`ropewatch store copy`), in an order that puts every
 * referenced row before the rows that refer to it, each with the key its rows are read in; and
 * the digest of a table: its rows in key order, each as canonical text, through SHA-256. Both
 * backends give the same JavaScript values for the same stored row (integers and reals as
 * numbers, text as strings, bytes as Buffers, NULL as null), so equal digests mean equal tables.
 */
import { createHash } from 'node:crypto';

export interface CopiedTable {
  readonly name: string;
  /** The columns rows are ordered by (a key); undefined: all columns (a table without a key). */
  readonly key?: readonly string[];
}

/** Every table of the store at SQLite version 10 (the views are not copied: they are queries). */
export const COPIED_TABLES: readonly CopiedTable[] = [
  { name: 'meta', key: ['key'] },
  { name: 'files', key: ['id'] },
  { name: 'samples', key: ['id'] },
  { name: 'reasons', key: ['id'] },
  { name: 'readings', key: ['id'] },
  { name: 'results', key: ['id'] },
  { name: 'supersessions', key: ['old_result_id'] },
  { name: 'rejected_rows', key: ['id'] },
  { name: 'planned_ropes', key: ['sample_id'] },
  { name: 'ropes', key: ['sample'] },
  { name: 'site_versions', key: ['site_id'] },
  { name: 'site_changes', key: ['site_id', 'version'] },
  { name: 'outputs_built', key: ['outbox', 'site_id'] },
  { name: 'analysis_rope_rounds', key: ['site_id', 'sample_id'] },
  { name: 'analysis_rounds' },
  { name: 'analysis_alerts', key: ['site', 'key'] },
];

/** One stored value as canonical text: its kind, then its value. */
function canonicalValue(value: unknown): string {
  if (value === null || value === undefined) return 'N';
  if (typeof value === 'number' || typeof value === 'bigint') return `n${String(value)}`;
  if (typeof value === 'string') return `t${JSON.stringify(value)}`;
  if (value instanceof Uint8Array)
    return `b${Buffer.from(value.buffer, value.byteOffset, value.byteLength).toString('hex')}`;
  if (typeof value === 'boolean') return `n${value ? 1 : 0}`;
  throw new TypeError(`a stored value of an unexpected kind: ${typeof value}`);
}

/** One row as canonical text (values in column order, tab-separated). */
export function canonicalRow(row: readonly unknown[]): string {
  return row.map(canonicalValue).join('\t');
}

export interface TableDigest {
  rows: number;
  sha256: string;
}

/** The digest of rows given in key order. */
export function digestRows(rows: Iterable<readonly unknown[]>): TableDigest {
  const hash = createHash('sha256');
  let count = 0;
  for (const row of rows) {
    hash.update(canonicalRow(row));
    hash.update('\n');
    count += 1;
  }
  return { rows: count, sha256: hash.digest('hex') };
}
