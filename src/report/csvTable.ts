/** A CSV table with a fixed, documented column list: rows give values by column name, blanks for the rest. */
import { stringify } from 'csv-stringify/sync';

export type CsvRow<C extends string> = Partial<Record<C, string | number | boolean | null>>;

export function csvTable<C extends string>(columns: readonly C[], rows: readonly CsvRow<C>[]): string {
  return stringify(
    rows.map((row) => columns.map((column) => row[column] ?? '')),
    { header: true, columns: [...columns], cast: { boolean: (value) => (value ? 'true' : 'false') } },
  );
}
