/**
 * A reading (src/store/readings.ts) found by its values in the PostgreSQL store, or stored when
 * none is, in one round trip: the INSERT of a data-modifying WITH runs only when the look-up found
 * nothing (PostgreSQL 17 documentation, "WITH Queries", section "Data-Modifying Statements in
 * WITH"). A store holds tens to hundreds of readings and the writer remembers each it met
 * (ReadingIds), so this runs about once per reading and writing process.
 *
 * A new reading takes its id from the table's sequence when the first row read so is stored, so
 * readings are numbered in the order rows are stored, as the SQLite store numbers them. Readings
 * have no key on their values (a NULL is never equal under UNIQUE): two processes storing the
 * same new reading at once each store their own, and their results read alike through either.
 */
import { READING_COLUMNS, type ReadingValue } from '../readings.js';
import type { SyncConnection } from './syncConnection.js';

/** Each column's PostgreSQL type (migration 2), which its parameter is cast to. */
const READING_TYPES: Record<(typeof READING_COLUMNS)[number], string> = {
  lab_assay: 'text',
  measure: 'text',
  class: 'text',
  lab_call: 'text',
  lab_call_class: 'text',
  call_differs: 'bigint',
  report_status: 'text',
  status_kind: 'text',
  status_word: 'text',
  control: 'text',
  load_band: 'text',
  positive_below: 'double precision',
  suspect_below: 'double precision',
  cycle_limit: 'double precision',
  positive_at_or_above: 'double precision',
  suspect_at_or_above: 'double precision',
};

const PARAMETERS = READING_COLUMNS.map((column, index) => `$${index + 1}::${READING_TYPES[column]}`);

const FIND_OR_STORE = `WITH found AS (
    SELECT id FROM readings
     WHERE ${READING_COLUMNS.map((column, index) => `${column} IS NOT DISTINCT FROM ${PARAMETERS[index]}`).join(' AND ')}
     ORDER BY id LIMIT 1
  ), stored AS (
    INSERT INTO readings (${READING_COLUMNS.join(', ')})
    SELECT ${PARAMETERS.join(', ')} WHERE NOT EXISTS (SELECT 1 FROM found)
    RETURNING id
  )
  SELECT id, false AS stored FROM found UNION ALL SELECT id, true AS stored FROM stored`;

/** The id of the reading with these values (READING_COLUMNS order), and whether it was stored now. */
export function findOrStoreReading(
  conn: SyncConnection,
  values: readonly ReadingValue[],
): { id: number; stored: boolean } {
  const row = conn.query<{ id: number; stored: boolean }>(FIND_OR_STORE, values).rows[0];
  if (row === undefined) throw new Error('a reading was neither found nor stored');
  return row;
}
