/**
 * What each round's files in the outbox were built from: outbox/<site>/.built-rounds.json lists
 * every round with the digest of its findings (src/analysis/roundDigests.ts) and what the site's
 * own files need of it: its alerts, its alert records, and how many bytes its rows take in each
 * tidy table (a table is its rounds' rows in round order, so the rows of the rounds left alone are
 * the start of the file as it is). It also keeps each round's span and ropes' digest, and the
 * site version and shared inputs the build read, from which the next build reads only the ropes
 * the change log shows changed (src/rounds/roundHorizon.ts). A build rewrites the rounds whose
 * digest changed or whose files are gone, and takes the rest from here, so one more file costs
 * the same whatever the history. The list is written last, after the round files it describes; a
 * build interrupted before it rewrites those rounds next time.
 * Deleting it (or `ropewatch report`) rebuilds every round.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { AlertRecord } from '../alerts/records.js';
import type { PageAlert } from './html/alerts.js';
import type { BuiltHistory } from '../rounds/roundHorizon.js';
import { TIDY_TABLES, type TidyFragments } from './tidy/tidyTables.js';

export const BUILT_ROUNDS_FILE = '.built-rounds.json';
const BUILT_ROUNDS_SCHEMA = 'ropewatch.built-rounds/2';

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
  startOn: string;
  endOn: string;
  /** RoundKey.ropes: the digest of its ropes and their reports' keys, as the round was formed. */
  ropes: string;
  digest: string;
  alerts: PageAlert[];
  records: AlertRecord[];
  /** Bytes the round's rows take in each tidy table. */
  tidyBytes: Record<TidyName, number>;
}

interface BuiltRoundsFile {
  schema: typeof BUILT_ROUNDS_SCHEMA;
  site: string;
  /** The site version of the committed state the build read. */
  siteVersion: number;
  /** The shared inputs digest of its round keys (src/rounds/roundInputKeys.ts). */
  shared: string;
  rounds: BuiltRound[];
  /** Each tidy table's size as written. */
  tidySizes: Record<TidyName, number>;
}

/** What the last build of a site kept: the rounds in order, from which state, and which of them still have their files. */
export interface BuiltRounds {
  /** The rounds whose files are all there, by round id. */
  byId: Map<string, BuiltRound>;
  /** Every round of the list in order, with the state it was built from (src/rounds/roundHorizon.ts). */
  history: BuiltHistory | undefined;
}

/**
 * The rounds of a site's folder as last built. A missing, unreadable or foreign list, or a tidy
 * table not of the size written, reads as nothing built (every round is rebuilt).
 */
export function readBuiltRounds(siteDir: string, siteId: string): BuiltRounds {
  const nothing: BuiltRounds = { byId: new Map(), history: undefined };
  let value: Partial<BuiltRoundsFile>;
  try {
    value = JSON.parse(fs.readFileSync(path.join(siteDir, BUILT_ROUNDS_FILE), 'utf8')) as Partial<BuiltRoundsFile>;
  } catch {
    return nothing;
  }
  if (
    value.schema !== BUILT_ROUNDS_SCHEMA ||
    value.site !== siteId ||
    !Array.isArray(value.rounds) ||
    typeof value.siteVersion !== 'number' ||
    typeof value.shared !== 'string'
  )
    return nothing;
  const sizes = value.tidySizes;
  const tablesAsWritten = TIDY_TABLES.every(
    (table) => fs.statSync(path.join(siteDir, table.file), { throwIfNoEntry: false })?.size === sizes?.[table.name],
  );
  if (!tablesAsWritten) return nothing;
  const byId = new Map<string, BuiltRound>();
  for (const round of value.rounds) {
    const folder = path.join(siteDir, round.id);
    if (ROUND_FILES.every((file) => fs.existsSync(path.join(folder, file)))) byId.set(round.id, round);
  }
  return { byId, history: { siteVersion: value.siteVersion, shared: value.shared, rounds: value.rounds } };
}

/** The list's text (compact: it is read by the program, not by people). */
export function builtRoundsText(
  siteId: string,
  state: Pick<BuiltHistory, 'siteVersion' | 'shared'>,
  rounds: readonly BuiltRound[],
  tidySizes: Record<TidyName, number>,
): string {
  const file: BuiltRoundsFile = {
    schema: BUILT_ROUNDS_SCHEMA,
    site: siteId,
    siteVersion: state.siteVersion,
    shared: state.shared,
    rounds: [...rounds],
    tidySizes,
  };
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
