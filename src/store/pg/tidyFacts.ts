/**
 * The PostgreSQL store's side of the tidy tables (src/store/tidyFacts.ts is SQLite's): a build of
 * a site's outputs replaces the site's rows of analysis_rope_rounds, analysis_rounds and
 * analysis_alerts in one transaction, and the views tidy_results, tidy_rounds and tidy_alerts
 * (migration 1) give them back in the order SQLite gives them, text ordered by its bytes
 * (COLLATE "C", as SQLite's BINARY collation). The lock on sites is a session-level advisory
 * lock per site (PostgreSQL 17 documentation, "Advisory Locks"), taken in the order of its keys.
 */
import {
  type FactValue,
  type RopeRound,
  type SiteFacts,
  TIDY_VIEWS,
  type TidyCells,
  type TidyRange,
  type TidyView,
} from '../../domain/store.js';
import { PgError, quoteIdentifier, type SqlValue, type SyncConnection } from './syncConnection.js';

/** The order rows come in, as the SQLite store's (tidyFacts.ts TIDY_ORDER), text compared by its bytes. */
const ORDER: Record<TidyView, string> = {
  results: 'round, barn COLLATE "C", pen COLLATE "C", assay COLLATE "C" NULLS FIRST, result_id',
  rounds: 'round, barn COLLATE "C", assay COLLATE "C" NULLS FIRST',
  alerts: 'round, key COLLATE "C"',
};

/** Each view's query for one site's rows in a range, written once (the server plans it on each call). */
const VIEW_SQL: Record<TidyView, string> = Object.fromEntries(
  (Object.keys(ORDER) as TidyView[]).map((view) => [
    view,
    `SELECT * FROM ${quoteIdentifier(TIDY_VIEWS[view])} WHERE site = $1
       AND ($2::text IS NULL OR round_start >= $2 COLLATE "C") AND ($3::text IS NULL OR round_start <= $3 COLLATE "C")
       AND round >= $4
     ORDER BY ${ORDER[view]}`,
  ]),
) as Record<TidyView, string>;

const ROPE_COLUMNS = [
  'site_id',
  'sample_id',
  'round',
  'round_id',
  'round_start',
  'group_id',
  'barn_id',
  'pen_id',
  'pool_id',
] as const;
/** Rope rows per INSERT statement (nine parameters each, well under the 65,535 a statement takes). */
const ROPES_PER_INSERT = 2000;

/** The advisory lock keys' first half: "rope" in ASCII (the migration lock's single key is another key space). */
const SITE_LOCK_SPACE = 0x726f_7065;

/** A value as the SQLite store keeps it: a boolean as 1 or 0 (the columns are integers in both stores). */
const sqlValue = (value: FactValue | undefined): SqlValue =>
  value === undefined ? null : typeof value === 'boolean' ? (value ? 1 : 0) : value;

/**
 * A site's rope rounds once each, the first given for a sample winning, as SQLite's INSERT OR
 * IGNORE keeps them; ON CONFLICT DO NOTHING leaves alone a sample of a round kept from before.
 */
function insertRopeRounds(conn: SyncConnection, siteId: string, ropes: readonly RopeRound[]): void {
  const seen = new Set<string>();
  const unique = ropes.filter((rope) => !seen.has(rope.sampleId) && seen.add(rope.sampleId));
  for (let start = 0; start < unique.length; start += ROPES_PER_INSERT) {
    const chunk = unique.slice(start, start + ROPES_PER_INSERT);
    const params: SqlValue[] = [];
    const tuples = chunk.map((rope, i) => {
      params.push(
        siteId,
        rope.sampleId,
        rope.round,
        rope.roundId,
        rope.roundStart,
        rope.groupId,
        rope.barnId,
        rope.penId,
        rope.poolId,
      );
      return `(${ROPE_COLUMNS.map((_, c) => `$${i * ROPE_COLUMNS.length + c + 1}`).join(', ')})`;
    });
    conn.query(
      `INSERT INTO analysis_rope_rounds (${ROPE_COLUMNS.join(', ')}) VALUES ${tuples.join(', ')} ON CONFLICT DO NOTHING`,
      params,
    );
  }
}

/** Rows whose keys are the table's columns, loaded with COPY (the columns of the first row). */
function copyRows(conn: SyncConnection, table: string, rows: readonly Record<string, FactValue>[]): void {
  if (rows.length === 0) return;
  const columns = Object.keys(rows[0]!);
  conn.copyIn(
    table,
    columns,
    rows.map((row) => columns.map((name) => sqlValue(row[name]))),
  );
}

/**
 * Replaces a site's facts of round `fromRound` on (all of them by default) in one transaction;
 * the facts given are those of these rounds.
 */
export function replaceSiteFactsPg(conn: SyncConnection, siteId: string, facts: SiteFacts, fromRound = 1): void {
  conn.transaction(() => {
    conn.query('DELETE FROM analysis_rope_rounds WHERE site_id = $1 AND round >= $2', [siteId, fromRound]);
    conn.query('DELETE FROM analysis_rounds WHERE site = $1 AND round >= $2', [siteId, fromRound]);
    conn.query('DELETE FROM analysis_alerts WHERE site = $1 AND round >= $2', [siteId, fromRound]);
    insertRopeRounds(conn, siteId, facts.ropeRounds);
    copyRows(conn, 'analysis_rounds', facts.rounds);
    copyRows(conn, 'analysis_alerts', facts.alerts);
  });
}

/**
 * Rows of a view for one site in `range`, in the SQLite store's order, as cells in the order of
 * the first row's keys (the view's columns, as the server sent them); no names when no row came.
 */
export function tidyRowsPg(conn: SyncConnection, view: TidyView, siteId: string, range: TidyRange = {}): TidyCells {
  const { rows } = conn.query(VIEW_SQL[view], [siteId, range.from ?? null, range.to ?? null, range.fromRound ?? 0]);
  const names = rows.length === 0 ? [] : Object.keys(rows[0]!);
  return { names, rows: rows.map((row) => names.map((name) => row[name])) };
}

/** A site's advisory lock key: FNV-1a (32 bits) of its id, as a signed 32-bit integer. */
export function siteLockKey(siteId: string): number {
  let hash = 0x811c9dc5;
  for (const byte of Buffer.from(siteId, 'utf8')) hash = Math.imul(hash ^ byte, 0x01000193);
  return hash | 0;
}

/**
 * Takes the session-level advisory lock of each site (waiting while another session holds one),
 * in the order of their keys so that two sessions taking several never wait on each other;
 * returns the function that lets them go.
 */
export function lockSitesPg(conn: SyncConnection, siteIds: readonly string[]): () => void {
  const keys = [...new Set(siteIds.map(siteLockKey))].sort((a, b) => a - b);
  const held: number[] = [];
  try {
    for (const key of keys) {
      conn.query('SELECT pg_advisory_lock($1, $2)', [SITE_LOCK_SPACE, key]);
      held.push(key);
    }
  } catch (error) {
    unlock(conn, held);
    throw error;
  }
  let released = false;
  return () => {
    if (released) return;
    released = true;
    try {
      unlock(conn, held);
    } catch (error) {
      // A session that has ended holds no advisory lock any more: nothing is left to let go, and
      // the error that ended the connection is the one the caller must see, not this one.
      if (!(error instanceof PgError) || (error.code !== 'connection' && error.code !== 'timeout')) throw error;
    }
  };
}

function unlock(conn: SyncConnection, keys: readonly number[]): void {
  for (const key of [...keys].reverse()) conn.query('SELECT pg_advisory_unlock($1, $2)', [SITE_LOCK_SPACE, key]);
}
