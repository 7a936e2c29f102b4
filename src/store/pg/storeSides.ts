/**
 * Each backend as one side of a store copy (copyStore.ts): which tables it has, their columns,
 * their rows in key order, and, as the target, loading rows inside one transaction. The SQLite
 * side reads with better-sqlite3 and inserts with a prepared statement; the PostgreSQL side reads
 * through a cursor in batches and loads with COPY.
 */
import type Database from 'better-sqlite3';
import type { CopiedTable } from './copyTables.js';
import { quoteIdentifier, type SqlValue, type SyncConnection } from './syncConnection.js';

/** Rows fetched from a PostgreSQL cursor at a time. */
const FETCH_ROWS = 5000;

export interface StoreSide {
  /** The location as it may be shown (no password). */
  readonly shown: string;
  /** The store's own tables (not the schema's bookkeeping). */
  tableNames(): string[];
  /** A table's columns, in their order. */
  columns(table: string): string[];
  count(table: string): number;
  /** A table's rows in key order, each as its values in `columns` order. */
  rows(table: CopiedTable, columns: readonly string[]): Iterable<unknown[]>;
  /** A consistent view for reading (source) or one transaction for writing (target). */
  begin(mode: 'read' | 'write'): void;
  insert(table: string, columns: readonly string[], rows: Iterable<unknown[]>): number;
  /** After loading with explicit ids: the next id each table hands out follows the largest. */
  afterLoad(): void;
  commit(): void;
  rollback(): void;
  close(): void;
}

const columnList = (columns: readonly string[]) => columns.map(quoteIdentifier).join(', ');

export class SqliteSide implements StoreSide {
  constructor(
    private readonly db: Database.Database,
    readonly shown: string,
  ) {}

  tableNames(): string[] {
    const rows = this.db
      .prepare(
        "SELECT name FROM sqlite_master WHERE type = 'table' AND name NOT LIKE 'sqlite\\_%' ESCAPE '\\' ORDER BY name",
      )
      .all() as { name: string }[];
    return rows.map((r) => r.name);
  }

  columns(table: string): string[] {
    return (this.db.pragma(`table_info(${quoteIdentifier(table)})`) as { name: string }[]).map((c) => c.name);
  }

  count(table: string): number {
    return (this.db.prepare(`SELECT count(*) AS n FROM ${quoteIdentifier(table)}`).get() as { n: number }).n;
  }

  rows(table: CopiedTable, columns: readonly string[]): Iterable<unknown[]> {
    // Text sorts by its bytes (BINARY), NULL first: as PostgreSQL's side orders with COLLATE "C" and NULLS FIRST.
    const order = columnList(table.key ?? columns);
    return this.db
      .prepare(`SELECT ${columnList(columns)} FROM ${quoteIdentifier(table.name)} ORDER BY ${order}`)
      .raw(true)
      .iterate() as Iterable<unknown[]>;
  }

  begin(mode: 'read' | 'write'): void {
    this.db.exec(mode === 'write' ? 'BEGIN IMMEDIATE' : 'BEGIN');
  }

  insert(table: string, columns: readonly string[], rows: Iterable<unknown[]>): number {
    const insert = this.db.prepare(
      `INSERT INTO ${quoteIdentifier(table)} (${columnList(columns)}) VALUES (${columns.map(() => '?').join(', ')})`,
    );
    let count = 0;
    for (const row of rows) {
      insert.run(row);
      count += 1;
    }
    return count;
  }

  afterLoad(): void {
    // Row ids follow the largest stored by themselves.
  }

  commit(): void {
    this.db.exec('COMMIT');
  }

  rollback(): void {
    if (this.db.inTransaction) this.db.exec('ROLLBACK');
  }

  close(): void {
    this.rollback();
    this.db.close();
  }
}

export class PgSide implements StoreSide {
  private cursors = 0;
  private inTransaction = false;

  constructor(
    private readonly conn: SyncConnection,
    readonly shown: string,
  ) {}

  tableNames(): string[] {
    return this.conn
      .query<{ name: string }>(
        `SELECT table_name AS name FROM information_schema.tables
          WHERE table_schema = current_schema() AND table_type = 'BASE TABLE' AND table_name <> 'schema_migrations'
          ORDER BY table_name`,
      )
      .rows.map((r) => r.name);
  }

  private columnTypes(table: string): { name: string; type: string }[] {
    return this.conn.query<{ name: string; type: string }>(
      `SELECT column_name AS name, data_type AS type FROM information_schema.columns
        WHERE table_schema = current_schema() AND table_name = $1 ORDER BY ordinal_position`,
      [table],
    ).rows;
  }

  columns(table: string): string[] {
    return this.columnTypes(table).map((c) => c.name);
  }

  count(table: string): number {
    return this.conn.query<{ n: number }>(`SELECT count(*) AS n FROM ${quoteIdentifier(table)}`).rows[0]?.n ?? 0;
  }

  *rows(table: CopiedTable, columns: readonly string[]): Iterable<unknown[]> {
    const types = new Map(this.columnTypes(table.name).map((c) => [c.name, c.type]));
    const order = (table.key ?? columns)
      .map((c) => `${quoteIdentifier(c)}${types.get(c) === 'text' ? ' COLLATE "C"' : ''} NULLS FIRST`)
      .join(', ');
    this.cursors += 1;
    const cursor = `copy_rows_${this.cursors}`;
    this.conn.query(
      `DECLARE ${cursor} NO SCROLL CURSOR FOR SELECT ${columnList(columns)} FROM ${quoteIdentifier(table.name)} ORDER BY ${order}`,
    );
    try {
      for (;;) {
        const batch = this.conn.query(`FETCH FORWARD ${FETCH_ROWS} FROM ${cursor}`).rows;
        for (const row of batch) yield columns.map((c) => row[c]);
        if (batch.length < FETCH_ROWS) break;
      }
    } finally {
      this.conn.query(`CLOSE ${cursor}`);
    }
  }

  begin(mode: 'read' | 'write'): void {
    // A read sees one snapshot throughout (copy, then digest); a cursor needs a transaction.
    this.conn.query(mode === 'write' ? 'BEGIN' : 'BEGIN ISOLATION LEVEL REPEATABLE READ READ ONLY');
    this.inTransaction = true;
  }

  insert(table: string, columns: readonly string[], rows: Iterable<unknown[]>): number {
    return this.conn.copyIn(table, columns, rows as Iterable<SqlValue[]>);
  }

  afterLoad(): void {
    const identities = this.conn.query<{ table: string; column: string }>(
      `SELECT table_name AS table, column_name AS column FROM information_schema.columns
        WHERE table_schema = current_schema() AND is_identity = 'YES'`,
    ).rows;
    for (const { table, column } of identities) {
      this.conn.query(
        `SELECT setval(pg_get_serial_sequence($1, $2), m) FROM (SELECT max(${quoteIdentifier(column)}) AS m FROM ${quoteIdentifier(table)}) x WHERE m IS NOT NULL`,
        [quoteIdentifier(table), column],
      );
    }
  }

  commit(): void {
    this.conn.query('COMMIT');
    this.inTransaction = false;
  }

  rollback(): void {
    if (!this.inTransaction) return;
    this.inTransaction = false;
    this.conn.query('ROLLBACK');
  }

  close(): void {
    try {
      this.rollback();
    } finally {
      this.conn.close();
    }
  }
}
