/**
 * The tidy tables of a site: results.csv, rounds.csv and alerts.csv under outbox/<site>/, across
 * every round of the site. A build of the outputs gives the store the facts (each rope's round,
 * the rounds' figures, the alerts) of the rounds it rewrites, then reads those rounds back from
 * the store's views, so that the files, `ropewatch export` and an analyst reading the store see
 * the same rows; the rounds it leaves alone keep their rows (src/report/builtRounds.ts).
 */
import type { AlertRecord } from '../../alerts/records.js';
import type { SiteAnalysis } from '../../analysis/analyseSite.js';
import type { StoreFacts } from '../../domain/store.js';
import { ALERTS_TABLE, alertRows } from './alertsTable.js';
import { type Column, cellPlaces, storedRowsCsv, type TidyRow, type TidyTable, tidyCsv, typedRow } from './columns.js';
import { RESULTS_TABLE, ropeRounds } from './resultsTable.js';
import { ROUNDS_TABLE, roundRows } from './roundsTable.js';

export const TIDY_TABLES: readonly TidyTable[] = [RESULTS_TABLE, ROUNDS_TABLE, ALERTS_TABLE];

export type TidyTables = Record<TidyTable['name'], TidyRow[]>;

/** The column every view has: the round a row belongs to, by which a build splits the rows. */
const ROUND_COLUMN: Column = { name: 'round', kind: 'integer' };

/** A date range on the rounds' first days (ISO dates, both ends included; either may be open). */
export interface RoundRange {
  from?: string | undefined;
  to?: string | undefined;
}

/** A round's rows of each tidy table as CSV lines (no header), in the tables' row order. */
export type TidyFragments = Record<TidyTable['name'], string>;

/**
 * Gives the store the site's facts of the rounds from index `from` on (those before keep theirs)
 * and reads these rounds back from the store's views as CSV fragments, one per round: the files
 * are the fragments of every round in round order, as the views give them (by round first).
 * @param records the alert records of the rounds from `from` on
 */
export function storeTidyRounds(
  store: StoreFacts,
  analysis: SiteAnalysis,
  records: readonly AlertRecord[],
  from: number,
): TidyFragments[] {
  const later = analysis.rounds.slice(from);
  if (later.length === 0) return [];
  const fromRound = later[0]!.number;
  store.replaceSiteFacts(
    analysis.site.id,
    { ropeRounds: ropeRounds(analysis, from), rounds: roundRows(analysis, from), alerts: alertRows(records) },
    fromRound,
  );
  const byTable = TIDY_TABLES.map((table) => {
    const { names, rows } = store.tidyRows(table.name, analysis.site.id, { fromRound });
    const byRound = new Map<number, (readonly unknown[])[]>();
    if (rows.length === 0) return { table, places: [], byRound };
    const roundPlace = cellPlaces([ROUND_COLUMN], names)[0]!;
    for (const row of rows) {
      const round = Number(row[roundPlace]);
      const ofRound = byRound.get(round) ?? [];
      ofRound.push(row);
      byRound.set(round, ofRound);
    }
    return { table, places: cellPlaces(table.columns, names), byRound };
  });
  return later.map(
    (round) =>
      Object.fromEntries(
        byTable.map(({ table, places, byRound }) => [
          table.name,
          storedRowsCsv(table.columns, places, byRound.get(round.number) ?? []),
        ]),
      ) as TidyFragments,
  );
}

/** A tidy table's header line. */
export function tidyHeader(name: TidyTable['name']): string {
  return TIDY_HEADERS[name];
}

const TIDY_HEADERS = Object.fromEntries(TIDY_TABLES.map((table) => [table.name, tidyCsv(table.columns, [])])) as Record<
  TidyTable['name'],
  string
>;

/** The site's tidy tables as the store's views give them, typed by their columns. */
export function readTidyTables(store: StoreFacts, siteId: string, range: RoundRange = {}): TidyTables {
  const read = (table: TidyTable): TidyRow[] => {
    const { names, rows } = store.tidyRows(table.name, siteId, range);
    if (rows.length === 0) return [];
    const places = cellPlaces(table.columns, names);
    return rows.map((cells) => typedRow(table.columns, places, cells));
  };
  return { results: read(RESULTS_TABLE), rounds: read(ROUNDS_TABLE), alerts: read(ALERTS_TABLE) };
}
