/**
 * The tidy tables of a site: results.csv, rounds.csv and alerts.csv under outbox/<site>/, across
 * every round of the site. Each build of the outputs gives the store the site's facts (each
 * rope's round, the rounds' figures, the alerts), then reads the tables back from the store's
 * views, so that the files, `ropewatch export` and an analyst reading the store see the same rows.
 */
import path from 'node:path';
import type Database from 'better-sqlite3';
import type { AlertRecord } from '../../alerts/records.js';
import type { SiteAnalysis } from '../../analysis/analyseSite.js';
import { readTidyView, replaceSiteFacts } from '../../store/tidyFacts.js';
import type { OutputWriter } from '../files.js';
import { ALERTS_TABLE, alertRows } from './alertsTable.js';
import { type TidyRow, type TidyTable, tidyCsv, typedRow } from './columns.js';
import { RESULTS_TABLE, ropeRounds } from './resultsTable.js';
import { ROUNDS_TABLE, roundRows } from './roundsTable.js';

export const TIDY_TABLES: readonly TidyTable[] = [RESULTS_TABLE, ROUNDS_TABLE, ALERTS_TABLE];

export type TidyTables = Record<TidyTable['name'], TidyRow[]>;

/** A date range on the rounds' first days (ISO dates, both ends included; either may be open). */
export interface RoundRange {
  from?: string | undefined;
  to?: string | undefined;
}

/** Gives the store the site's facts (replacing those of the last build). */
export function storeSiteFacts(db: Database.Database, analysis: SiteAnalysis, alerts: readonly AlertRecord[]): void {
  replaceSiteFacts(db, analysis.site.id, {
    ropeRounds: ropeRounds(analysis),
    rounds: roundRows(analysis),
    alerts: alertRows(alerts),
  });
}

/** The site's tidy tables as the store's views give them, typed by their columns. */
export function readTidyTables(db: Database.Database, siteId: string, range: RoundRange = {}): TidyTables {
  const read = (table: TidyTable): TidyRow[] =>
    readTidyView(db, table.name, siteId, range).map((raw) => typedRow(table.columns, raw));
  return { results: read(RESULTS_TABLE), rounds: read(ROUNDS_TABLE), alerts: read(ALERTS_TABLE) };
}

/** Stores the site's facts and writes results.csv, rounds.csv and alerts.csv into its folder. */
export function writeTidyTables(
  db: Database.Database,
  analysis: SiteAnalysis,
  alerts: readonly AlertRecord[],
  siteDir: string,
  writer: OutputWriter,
): void {
  storeSiteFacts(db, analysis, alerts);
  const tables = readTidyTables(db, analysis.site.id);
  for (const table of TIDY_TABLES)
    writer.write(path.join(siteDir, table.file), tidyCsv(table.columns, tables[table.name]));
}
