/**
 * The ids of the PostgreSQL store's tables, taken so that they come out as the SQLite store's
 * would (its INTEGER PRIMARY KEY gives the largest id plus one): a batch takes as many ids as it
 * stores rows, in one round trip, in row order (`nextval` over `generate_series`); a file rolled
 * back gives back the ids it took, as SQLite's rollback does, by setting each sequence back to its
 * table's largest id, unless another writer took ids after it (then the gap stays: ids are still
 * unique, only no longer those SQLite would give).
 */
import type { SyncConnection } from './syncConnection.js';

/** The sequences (qualified names) behind the tables whose ids the writer takes. */
export interface Sequences {
  files: string;
  samples: string;
  reasons: string;
  results: string;
  rejected_rows: string;
  /** Taken one at a time, by the INSERT that stores a new reading (readingRows.ts). */
  readings: string;
}

export type SequenceTable = keyof Sequences;
const TABLES: readonly SequenceTable[] = ['files', 'samples', 'reasons', 'results', 'rejected_rows', 'readings'];

export function sequencesOf(conn: SyncConnection): Sequences {
  const row = conn.query<Sequences>(
    `SELECT ${TABLES.map((table) => `pg_get_serial_sequence('${table}', 'id') AS ${table}`).join(', ')}`,
  ).rows[0];
  if (row === undefined || TABLES.some((table) => row[table] === null))
    throw new Error('the store has no id sequences');
  return row;
}

/** Ids taken for a batch, in order, per table. */
export interface TakenIds {
  samples: number[];
  reasons: number[];
  results: number[];
  rejections: number[];
}

/** Takes `counts` ids from each sequence in one round trip; each table's ids ascending. */
export function takeIds(
  conn: SyncConnection,
  sequences: Sequences,
  counts: { samples: number; reasons: number; results: number; rejections: number },
): TakenIds {
  if (counts.samples + counts.reasons + counts.results + counts.rejections === 0)
    return { samples: [], reasons: [], results: [], rejections: [] };
  const take = (n: number) =>
    `ARRAY(SELECT nextval($${n}::regclass) FROM generate_series(1, $${n + 1}::int) ORDER BY 1)`;
  const row = conn.query<Record<'s' | 'r' | 'x' | 'j', (string | number)[]>>(
    `SELECT ${take(1)} AS s, ${take(3)} AS r, ${take(5)} AS x, ${take(7)} AS j`,
    [
      sequences.samples,
      counts.samples,
      sequences.reasons,
      counts.reasons,
      sequences.results,
      counts.results,
      sequences.rejected_rows,
      counts.rejections,
    ],
  ).rows[0]!;
  return {
    samples: row.s.map(Number),
    reasons: row.r.map(Number),
    results: row.x.map(Number),
    rejections: row.j.map(Number),
  };
}

/** The largest id a file took from each sequence. */
export type TakenMax = Partial<Record<SequenceTable, number>>;

export function noteTaken(max: TakenMax, table: SequenceTable, ids: readonly number[]): void {
  const last = ids.at(-1);
  if (last !== undefined && (max[table] ?? 0) < last) max[table] = last;
}

/**
 * After a rollback (outside any transaction): each sequence the file took ids from is set back to
 * its table's largest id when its last value is still the last id this file took.
 */
export function giveBackIds(conn: SyncConnection, sequences: Sequences, taken: TakenMax): void {
  const parts: string[] = [];
  const params: number[] = [];
  for (const table of TABLES) {
    const last = taken[table];
    if (last === undefined) continue;
    params.push(last);
    const seq = sequences[table];
    const largest = `(SELECT coalesce(max(id), 0) FROM ${table})`;
    parts.push(
      `(SELECT CASE WHEN last_value = $${params.length} THEN setval('${seq.replaceAll("'", "''")}', greatest(${largest}, 1), ${largest} > 0) END FROM ${seq}) AS ${table}`,
    );
  }
  if (parts.length > 0) conn.query(`SELECT ${parts.join(', ')}`, params);
}
