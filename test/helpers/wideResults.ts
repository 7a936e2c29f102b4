/**
 * Fixtures that write results as whole rows, with the columns a result had before its reading
 * moved to a table of its own (SQLite store migration 9, src/store/readings.ts): each row's
 * reading is found by its values or inserted (as the store's writer does: findOrInsertReading), then
 * the result is inserted naming it.
 */
import type Database from 'better-sqlite3';
import { READING_COLUMNS, RESULT_COLUMNS, type ReadingValue } from '../../src/store/readings.js';
import { findOrInsertReading, prepareRowStatements } from '../../src/store/rowStatements.js';

/** A result's own columns (table `results` without `reading`). */
const OWN_COLUMNS = RESULT_COLUMNS.filter((column) => column !== 'reading');

/** Values a wide row may leave out, as the columns' defaults had them. */
const READING_DEFAULTS: Partial<Record<(typeof READING_COLUMNS)[number], ReadingValue>> = {
  measure: 'ct',
  call_differs: 0,
};

export type WideResult = Partial<
  Record<(typeof RESULT_COLUMNS)[number] | (typeof READING_COLUMNS)[number], ReadingValue>
>;

/**
 * Returns a function that inserts one wide row (column name -> value; a column left out is NULL,
 * or its default) and returns the result's id. ON CONFLICT DO NOTHING when `ignoreDuplicates`:
 * then 0 for a duplicate.
 */
export function wideResultInserter(
  db: Database.Database,
  options: { ignoreDuplicates?: boolean } = {},
): (row: WideResult) => number {
  const statements = prepareRowStatements(db);
  const insertResult = db.prepare(
    `INSERT INTO results (${OWN_COLUMNS.join(', ')}, reading) VALUES (${OWN_COLUMNS.map(() => '?').join(', ')}, ?)${
      options.ignoreDuplicates ? ' ON CONFLICT DO NOTHING' : ''
    }`,
  );
  return (row) => {
    const reading = READING_COLUMNS.map((column) => row[column] ?? READING_DEFAULTS[column] ?? null);
    const readingId = findOrInsertReading(statements, reading);
    const info = insertResult.run(...OWN_COLUMNS.map((column) => row[column] ?? null), readingId);
    return info.changes === 0 ? 0 : Number(info.lastInsertRowid);
  };
}
