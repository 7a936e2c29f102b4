/**
 * The store's side of the tidy tables (migration 7): each build of a site's outputs replaces the
 * site's rows in analysis_rope_rounds, analysis_rounds and analysis_alerts in one short write,
 * and the read-only views tidy_results, tidy_rounds and tidy_alerts give them back, joined with
 * the stored results, to the outputs, to `ropewatch export` and to analysts reading the store.
 */
import type Database from 'better-sqlite3';
import {
  type FactValue,
  type SiteFacts,
  TIDY_VIEWS,
  type TidyCells,
  type TidyRange,
  type TidyView,
} from '../domain/store.js';

export type { FactValue, RopeRound, SiteFacts, TidyCells, TidyRange, TidyView } from '../domain/store.js';
export { TIDY_VIEWS } from '../domain/store.js';

/** The order rows come in: by round, then what the row is about. */
export const TIDY_ORDER: Record<TidyView, string> = {
  results: 'round, barn, pen, assay, result_id',
  rounds: 'round, barn, assay',
  alerts: 'round, key',
};

/**
 * The statements of each connection, prepared once when first used: a build of every site reads
 * the views and replaces the facts once per site, and preparing a view's query (its joins
 * planned) costs about as much as running it for one site. A closed connection's entry goes
 * with the connection.
 */
const preparedByConnection = new WeakMap<Database.Database, Map<string, Database.Statement>>();

/** `sql` prepared on `db`, the statement kept for the next call with the same text. */
function prepared(db: Database.Database, sql: string): Database.Statement {
  let statements = preparedByConnection.get(db);
  if (statements === undefined) {
    statements = new Map();
    preparedByConnection.set(db, statements);
  }
  let statement = statements.get(sql);
  if (statement === undefined) {
    statement = db.prepare(sql);
    statements.set(sql, statement);
  }
  return statement;
}

/** Each view's query for one site's rows, in TIDY_ORDER. */
const VIEW_SQL: Record<TidyView, string> = Object.fromEntries(
  (Object.keys(TIDY_ORDER) as TidyView[]).map((view) => [
    view,
    `SELECT * FROM ${TIDY_VIEWS[view]} WHERE site = @siteId
       AND (@from IS NULL OR round_start >= @from) AND (@to IS NULL OR round_start <= @to)
       AND round >= @fromRound
     ORDER BY ${TIDY_ORDER[view]}`,
  ]),
) as Record<TidyView, string>;

type SqlCell = string | number | null;

const sqlValue = (value: FactValue | undefined): SqlCell =>
  value === undefined ? null : typeof value === 'boolean' ? (value ? 1 : 0) : value;

/**
 * Rows an INSERT statement takes at once: a build gives a site's thousands of rope rounds, and
 * one call into SQLite per row costs more than the row's insert; fifty rows of the widest table
 * stay far below SQLite's limit on a statement's parameters (sqlite.org/limits.html).
 */
const ROWS_PER_INSERT = 50;

/** `count` rows of `width` parameters each, as a VALUES list. */
function valuesList(width: number, count: number): string {
  const row = `(${new Array<string>(width).fill('?').join(', ')})`;
  return new Array<string>(count).fill(row).join(', ');
}

/**
 * Inserts the rows (each its cells in the columns' order) in their order through `head`
 * (`INSERT ... INTO table (columns) VALUES`): ROWS_PER_INSERT rows a statement, the rest one by
 * one. Rows are taken in order within a statement as across statements, so OR IGNORE keeps the
 * same first row; a refused row fails its statement and so the transaction, as it would alone.
 */
function insertRows(db: Database.Database, head: string, rows: readonly (readonly SqlCell[])[]): void {
  if (rows.length === 0) return;
  const width = rows[0]!.length;
  let at = 0;
  if (rows.length >= ROWS_PER_INSERT) {
    const many = prepared(db, `${head} ${valuesList(width, ROWS_PER_INSERT)}`);
    const cells: SqlCell[] = new Array(width * ROWS_PER_INSERT);
    for (; at + ROWS_PER_INSERT <= rows.length; at += ROWS_PER_INSERT) {
      for (let r = 0; r < ROWS_PER_INSERT; r++) {
        const row = rows[at + r]!;
        for (let c = 0; c < width; c++) cells[r * width + c] = row[c]!;
      }
      many.run(cells);
    }
  }
  if (at === rows.length) return;
  const one = prepared(db, `${head} ${valuesList(width, 1)}`);
  for (; at < rows.length; at++) one.run(rows[at]);
}

function insertAll(db: Database.Database, table: string, rows: readonly Record<string, FactValue>[]): void {
  if (rows.length === 0) return;
  const columns = Object.keys(rows[0]!);
  insertRows(
    db,
    `INSERT INTO ${table} (${columns.map((name) => `"${name}"`).join(', ')}) VALUES`,
    rows.map((row) => columns.map((name) => sqlValue(row[name]))),
  );
}

/**
 * Replaces a site's facts of round `fromRound` on (all of them by default) in one short
 * transaction (the write lock taken up front); the facts given are those of these rounds.
 */
export function replaceSiteFacts(db: Database.Database, siteId: string, facts: SiteFacts, fromRound = 1): void {
  db.transaction(() => {
    prepared(db, 'DELETE FROM analysis_rope_rounds WHERE site_id = ? AND round >= ?').run(siteId, fromRound);
    prepared(db, 'DELETE FROM analysis_rounds WHERE site = ? AND round >= ?').run(siteId, fromRound);
    prepared(db, 'DELETE FROM analysis_alerts WHERE site = ? AND round >= ?').run(siteId, fromRound);
    insertRows(
      db,
      'INSERT OR IGNORE INTO analysis_rope_rounds (site_id, sample_id, round, round_id, round_start, group_id, barn_id, pen_id, pool_id) VALUES',
      facts.ropeRounds.map((entry) => [
        siteId,
        entry.sampleId,
        entry.round,
        entry.roundId,
        entry.roundStart,
        entry.groupId,
        entry.barnId,
        entry.penId,
        entry.poolId,
      ]),
    );
    insertAll(db, 'analysis_rounds', facts.rounds);
    insertAll(db, 'analysis_alerts', facts.alerts);
  }).immediate();
}

/**
 * Rows of a view for one site whose rounds began in [from, to] (ISO dates; either may be left
 * open) and, with `fromRound`, are that round or a later one, as cells: better-sqlite3's row
 * objects come out slow to build and to read when a row has as many columns as tidy_results.
 */
export function readTidyView(db: Database.Database, view: TidyView, siteId: string, range: TidyRange = {}): TidyCells {
  const statement = prepared(db, VIEW_SQL[view]).raw(true);
  const rows = statement.all({
    siteId,
    from: range.from ?? null,
    to: range.to ?? null,
    fromRound: range.fromRound ?? 0,
  }) as unknown[][];
  return { names: statement.columns().map((column) => column.name), rows };
}
