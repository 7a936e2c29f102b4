/**
 * A whole store copied from one location to another (SQLite to PostgreSQL and back, or alike to
 * alike): every table, in one transaction on the target, then checked before the commit: each
 * table's row count and digest (copyTables.ts) on both sides must agree, or nothing is kept. A
 * target that holds any row is refused, so a copy never mixes two stores.
 */
import { openDatabase, StoreOpenError } from '../open.js';
import { redactedLocation, type StoreLocation } from '../location.js';
import { COPIED_TABLES, digestRows, type TableDigest } from './copyTables.js';
import { migratePg } from './migrations.js';
import { PgSide, SqliteSide, type StoreSide } from './storeSides.js';
import { PgError, SyncConnection } from './syncConnection.js';

export type StoreCopyCode = 'same-store' | 'unknown-tables' | 'schema-differs' | 'target-not-empty' | 'digest-differs';

/** A copy refused or undone: the code says why, the message names the stores and the table. */
export class StoreCopyError extends Error {
  override readonly name = 'StoreCopyError';
  constructor(
    readonly code: StoreCopyCode,
    message: string,
    readonly table?: string,
  ) {
    super(message);
  }
}

export interface CopiedTableReport extends TableDigest {
  table: string;
}

/**
 * Opens one side: a SQLite file (created and migrated for a target; it must exist for a source),
 * or a PostgreSQL database (migrated to the current schema).
 * @throws StoreOpenError naming the store (never its password) when it cannot be opened.
 */
export function openStoreSide(location: StoreLocation, role: 'source' | 'target'): StoreSide {
  if (location.kind === 'sqlite') {
    return new SqliteSide(openDatabase(location.file, { create: role === 'target' }), location.file);
  }
  const shown = redactedLocation(location.url);
  let conn: SyncConnection | undefined;
  try {
    conn = new SyncConnection(location.url);
    migratePg(conn);
  } catch (error) {
    conn?.close();
    if (!(error instanceof PgError)) throw error;
    throw new StoreOpenError(shown, `cannot be opened (PostgreSQL ${error.code}: ${error.message})`);
  }
  return new PgSide(conn, shown);
}

/** The tables both sides must have, with the same columns; their columns, by table. */
function checkSchemas(from: StoreSide, to: StoreSide): Map<string, string[]> {
  const known = COPIED_TABLES.map((t) => t.name).sort();
  for (const side of [from, to]) {
    const names = side.tableNames().sort();
    const unknown = names.filter((n) => !known.includes(n));
    const missing = known.filter((n) => !names.includes(n));
    if (unknown.length > 0 || missing.length > 0) {
      const parts = [
        unknown.length > 0 ? `tables this version does not know: ${unknown.join(', ')}` : '',
        missing.length > 0 ? `tables missing: ${missing.join(', ')}` : '',
      ].filter((p) => p !== '');
      throw new StoreCopyError('unknown-tables', `store ${side.shown}: ${parts.join('; ')}`);
    }
  }
  const columns = new Map<string, string[]>();
  for (const { name } of COPIED_TABLES) {
    const a = from.columns(name);
    const b = to.columns(name);
    if (a.join(',') !== b.join(',')) {
      throw new StoreCopyError(
        'schema-differs',
        `table ${name}: columns differ between ${from.shown} (${a.join(', ')}) and ${to.shown} (${b.join(', ')})`,
        name,
      );
    }
    columns.set(name, a);
  }
  return columns;
}

function checkEmpty(to: StoreSide): void {
  for (const { name } of COPIED_TABLES) {
    const rows = to.count(name);
    if (rows > 0) {
      throw new StoreCopyError(
        'target-not-empty',
        `store ${to.shown} is not empty (table ${name} holds ${rows} rows): a copy goes into an empty store only`,
        name,
      );
    }
  }
}

/**
 * Copies every table from `from` to `to` and checks the copy before committing it. Returns each
 * table's row count and digest (the same on both sides).
 * @throws StoreCopyError when the target holds rows, the schemas differ, or a digest differs
 *   (the target is rolled back); a PgError or SQLite error re-thrown after rolling back.
 */
export function copyStore(from: StoreSide, to: StoreSide): CopiedTableReport[] {
  const columns = checkSchemas(from, to);
  checkEmpty(to);
  from.begin('read');
  to.begin('write');
  try {
    for (const table of COPIED_TABLES) {
      const cols = columns.get(table.name) as string[];
      to.insert(table.name, cols, from.rows(table, cols));
    }
    to.afterLoad();
    const report: CopiedTableReport[] = [];
    for (const table of COPIED_TABLES) {
      const cols = columns.get(table.name) as string[];
      const source = digestRows(from.rows(table, cols));
      const target = digestRows(to.rows(table, cols));
      if (source.rows !== target.rows || source.sha256 !== target.sha256) {
        throw new StoreCopyError(
          'digest-differs',
          `table ${table.name}: ${source.rows} rows (sha256 ${source.sha256}) in ${from.shown}, ${target.rows} rows (sha256 ${target.sha256}) in the copy: nothing kept`,
          table.name,
        );
      }
      report.push({ table: table.name, ...source });
    }
    to.commit();
    from.rollback();
    return report;
  } catch (error) {
    to.rollback();
    from.rollback();
    throw error;
  }
}

/** Each table's row count and digest in key order, read in one consistent view. */
export function storeDigests(side: StoreSide): CopiedTableReport[] {
  side.begin('read');
  try {
    return COPIED_TABLES.map((table) => ({
      table: table.name,
      ...digestRows(side.rows(table, side.columns(table.name))),
    }));
  } finally {
    side.rollback();
  }
}
