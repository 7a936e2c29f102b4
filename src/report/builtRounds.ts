/**
 * What each round's files in the outbox were built from: outbox/<site>/.built-rounds.json lists
 * every round with the digest of its findings (src/analysis/roundDigests.ts) and what the site's
 * own files need of it: its alerts, its alert records, and how many bytes its rows take in each
 * tidy table (a table is its rounds' rows in round order, so the rows of the rounds left alone are
 * the start of the file as it is). A build rewrites the rounds whose digest changed or whose files
 * are gone, and takes the rest from here, so one more file costs the same whatever the history. The list is written last, after
 * the round files it describes; a build interrupted before it rewrites those rounds next time.
 * Deleting it (or `ropewatch report`) rebuilds every round.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { AlertRecord } from '../alerts/records.js';
import type { PageAlert } from './html/alerts.js';
import { TIDY_TABLES, type TidyFragments } from './tidy/tidyTables.js';

export const BUILT_ROUNDS_FILE = '.built-rounds.json';
const BUILT_ROUNDS_SCHEMA = 'ropewatch.built-rounds/1';

/**
 * Raise with any change to what a round's files hold or how they are worded, so that the first
 * build after an upgrade rewrites every round (the package version is taken into account too).
 */
export const ROUND_FILES_VERSION = 1;

/** The files every round folder holds. */
export const ROUND_FILES = [
  'summary.json',
  'summary.csv',
  'clusters.json',
  'clusters.csv',
  'summary.html',
  'clusters.html',
] as const;

export type TidyName = keyof TidyFragments;

export interface BuiltRound {
  id: string;
  digest: string;
  alerts: PageAlert[];
  records: AlertRecord[];
  /** Bytes the round's rows take in each tidy table. */
  tidyBytes: Record<TidyName, number>;
}

interface BuiltRoundsFile {
  schema: typeof BUILT_ROUNDS_SCHEMA;
  site: string;
  rounds: BuiltRound[];
  /** Each tidy table's size as written. */
  tidySizes: Record<TidyName, number>;
}

/**
 * The rounds of a site's folder as last built, by round id, those whose files are all there.
 * A missing, unreadable or foreign list, or a tidy table not of the size written, reads as
 * nothing built (every round is rebuilt).
 */
export function readBuiltRounds(siteDir: string, siteId: string): Map<string, BuiltRound> {
  let value: Partial<BuiltRoundsFile>;
  try {
    value = JSON.parse(fs.readFileSync(path.join(siteDir, BUILT_ROUNDS_FILE), 'utf8')) as Partial<BuiltRoundsFile>;
  } catch {
    return new Map();
  }
  if (value.schema !== BUILT_ROUNDS_SCHEMA || value.site !== siteId || !Array.isArray(value.rounds)) return new Map();
  const sizes = value.tidySizes;
  const tablesAsWritten = TIDY_TABLES.every(
    (table) => fs.statSync(path.join(siteDir, table.file), { throwIfNoEntry: false })?.size === sizes?.[table.name],
  );
  if (!tablesAsWritten) return new Map();
  const built = new Map<string, BuiltRound>();
  for (const round of value.rounds) {
    const folder = path.join(siteDir, round.id);
    if (ROUND_FILES.every((file) => fs.existsSync(path.join(folder, file)))) built.set(round.id, round);
  }
  return built;
}

/** The list's text (compact: it is read by the program, not by people). */
export function builtRoundsText(
  siteId: string,
  rounds: readonly BuiltRound[],
  tidySizes: Record<TidyName, number>,
): string {
  const file: BuiltRoundsFile = { schema: BUILT_ROUNDS_SCHEMA, site: siteId, rounds: [...rounds], tidySizes };
  return `${JSON.stringify(file)}\n`;
}

/**
 * The start of each tidy table as written: its header and the rows of the first `rounds` rounds
 * (read from the file, not rebuilt). The sizes were checked when the list was read.
 */
export function keptTidyRows(
  siteDir: string,
  rounds: readonly BuiltRound[],
  header: (table: TidyName) => string,
): Record<TidyName, Buffer> {
  return Object.fromEntries(
    TIDY_TABLES.map((table) => {
      if (rounds.length === 0) return [table.name, Buffer.from(header(table.name))];
      const length =
        Buffer.byteLength(header(table.name)) + rounds.reduce((sum, round) => sum + round.tidyBytes[table.name], 0);
      const kept = Buffer.alloc(length);
      const fd = fs.openSync(path.join(siteDir, table.file), 'r');
      try {
        const read = fs.readSync(fd, kept, 0, length, 0);
        if (read !== length) throw new Error(`${table.file} is shorter than written (${read} of ${length} bytes)`);
      } finally {
        fs.closeSync(fd);
      }
      return [table.name, kept];
    }),
  ) as Record<TidyName, Buffer>;
}
