/**
 * A PostgreSQL connection with a synchronous interface, for a store whose interfaces are
 * synchronous (src/domain/store.ts, shaped by better-sqlite3). The connection (node-postgres)
 * lives on a worker thread (syncWorker.ts); each call posts one request and blocks this thread on
 * Atomics.wait until the worker has put the reply on the reply port and counted it, then takes it
 * with receiveMessageOnPort (replyWait.ts). One request at a time, in order, on one connection: a transaction is
 * BEGIN ... COMMIT sent as queries.
 *
 * Measured round trip of a trivial query (`SELECT 1`, 2 000 in a row, local TCP, a 2-core machine
 * under a load of about 7): 0.6 to 1.0 ms, against 0.35 to 0.9 ms for node-postgres's own
 * asynchronous client in the same run; the hand-over between threads adds a fraction of that.
 * Starting the worker and connecting takes about 0.4 s compiled (dist/) and 0.7 s from the
 * TypeScript sources (tsx registered in the worker).
 */
import { MessageChannel, type MessagePort, Worker } from 'node:worker_threads';
import { copyLine } from './copyText.js';
import { awaitReply } from './replyWait.js';
import type {
  FromSyncWorker,
  ServerErrorFields,
  SqlParam,
  SqlValue,
  SyncWorkerData,
  ToSyncWorker,
} from './syncProtocol.js';

export type { SqlParam, SqlValue };

const WORKER_ENTRY = new URL('./syncWorkerBoot.mjs', import.meta.url);
/** Chunks of COPY data sent to the worker: large enough that a round trip per chunk costs nothing. */
const COPY_CHUNK_CHARS = 256 * 1024;
const DEFAULT_TIMEOUT_MS = 10 * 60 * 1000;

export interface QueryResult<Row> {
  rows: Row[];
  rowCount: number;
}

export interface SyncConnectionOptions {
  /** How long one request may take before the connection is given up (default ten minutes). */
  timeoutMs?: number;
  /** The worker's environment (default: this process's), where PGPASSWORD and the like are read. */
  env?: Readonly<Record<string, string>>;
}

/** A statement the server refused, or a connection that failed: the server's SQLSTATE code and words. */
export class PgError extends Error {
  override readonly name = 'PgError';
  /** The SQLSTATE code (for example 23505, a unique key violated), or `connection` / `timeout`. */
  readonly code: string;
  readonly detail: string | undefined;
  readonly hint: string | undefined;
  readonly constraint: string | undefined;
  readonly table: string | undefined;
  constructor(fields: ServerErrorFields & { code: string }) {
    super(fields.detail === undefined ? fields.message : `${fields.message} (${fields.detail})`);
    this.code = fields.code;
    this.detail = fields.detail;
    this.hint = fields.hint;
    this.constraint = fields.constraint;
    this.table = fields.table;
  }
}

/** Bytes come back from the worker as Uint8Array (structured clone): made Buffers again, as better-sqlite3 gives them. */
function withBuffers(rows: Record<string, unknown>[]): Record<string, unknown>[] {
  for (const row of rows) {
    for (const key in row) {
      const value = row[key];
      if (value instanceof Uint8Array && !Buffer.isBuffer(value)) {
        row[key] = Buffer.from(value.buffer, value.byteOffset, value.byteLength);
      }
    }
  }
  return rows;
}

export class SyncConnection {
  private readonly worker: Worker;
  /** The count of replies the worker has posted (replyWait.ts). */
  private readonly repliesPosted = new Int32Array(new SharedArrayBuffer(4));
  private requestsSent = 0;
  private readonly replies: MessagePort;
  private readonly timeoutMs: number;
  private closed = false;

  /**
   * Starts the worker and connects.
   * @throws PgError when the server cannot be reached or refuses the login.
   */
  constructor(connectionString: string, options: SyncConnectionOptions = {}) {
    this.timeoutMs = options.timeoutMs ?? DEFAULT_TIMEOUT_MS;
    const channel = new MessageChannel();
    this.replies = channel.port1;
    const data: SyncWorkerData = {
      connectionString,
      repliesPosted: this.repliesPosted.buffer as SharedArrayBuffer,
      replies: channel.port2,
    };
    this.worker = new Worker(WORKER_ENTRY, {
      workerData: data,
      transferList: [channel.port2],
      ...(options.env === undefined ? {} : { env: { ...options.env } }),
    });
    // The worker must not keep the process alive once its caller is done with it.
    this.worker.unref();
    try {
      this.request({ op: 'connect' });
    } catch (error) {
      this.stop();
      throw error;
    }
  }

  /** Runs one statement with `$1, $2 ...` parameters; its rows and the count of rows it touched. */
  query<Row = Record<string, unknown>>(text: string, params: readonly SqlParam[] = []): QueryResult<Row> {
    const reply = this.request({ op: 'query', text, params });
    return { rows: withBuffers(reply.rows) as Row[], rowCount: reply.rowCount };
  }

  /** Runs `body` between BEGIN and COMMIT; a throw rolls back and is re-thrown. */
  transaction<T>(body: () => T, begin = 'BEGIN'): T {
    this.query(begin);
    let result: T;
    try {
      result = body();
    } catch (error) {
      if (!this.closed) this.query('ROLLBACK');
      throw error;
    }
    this.query('COMMIT');
    return result;
  }

  /**
   * Loads rows into `table` with COPY FROM STDIN in text format (copyText.ts), in chunks.
   * Returns the number of rows the server took. A refused row fails the whole COPY (PgError):
   * inside a transaction, roll it back.
   */
  copyIn(table: string, columns: readonly string[], rows: Iterable<readonly SqlValue[]>): number {
    const target = `${quoteIdentifier(table)} (${columns.map(quoteIdentifier).join(', ')})`;
    this.request({ op: 'copyStart', sql: `COPY ${target} FROM STDIN (FORMAT text)` });
    let chunk = '';
    try {
      for (const row of rows) {
        if (row.length !== columns.length) {
          throw new RangeError(`copyIn ${table}: a row has ${row.length} fields, the columns are ${columns.length}`);
        }
        chunk += copyLine(row);
        if (chunk.length >= COPY_CHUNK_CHARS) {
          this.request({ op: 'copyData', chunk });
          chunk = '';
        }
      }
    } catch (error) {
      if (!(error instanceof PgError)) this.abortCopy(columns.length);
      throw error;
    }
    if (chunk !== '') this.request({ op: 'copyData', chunk });
    return this.request({ op: 'copyEnd' }).rowCount;
  }

  /** False once the connection has ended: closed, lost, or given up after a request with no answer. */
  get isOpen(): boolean {
    return !this.closed;
  }

  /** Ends the connection and the worker. Safe to call twice. */
  close(): void {
    if (this.closed) return;
    try {
      this.request({ op: 'close' });
    } finally {
      this.stop();
    }
  }

  /**
   * A COPY given up on the caller's side: a line with one field too many makes the server fail
   * it, so that the connection leaves COPY mode (an open COPY would hold every later query).
   */
  private abortCopy(columns: number): void {
    try {
      this.request({ op: 'copyData', chunk: `${'\t'.repeat(columns)}\n` });
      this.request({ op: 'copyEnd' });
    } catch {
      // The COPY fails, as it should: the error that matters is the caller's.
    }
  }

  private stop(): void {
    this.closed = true;
    this.replies.close();
    void this.worker.terminate();
  }

  private request(message: ToSyncWorker): Extract<FromSyncWorker, { ok: true }> {
    if (this.closed) throw new PgError({ code: 'connection', message: 'the PostgreSQL connection is closed' });
    this.requestsSent += 1;
    this.worker.postMessage(message);
    const awaited = awaitReply<FromSyncWorker>(this.replies, this.repliesPosted, this.requestsSent, this.timeoutMs);
    if (awaited.kind === 'timed-out') {
      this.stop();
      throw new PgError({ code: 'timeout', message: `PostgreSQL: no answer within ${this.timeoutMs} ms` });
    }
    const reply = awaited.reply;
    if (!reply.ok) {
      throw new PgError({ ...reply.error, code: reply.error.code ?? 'connection' });
    }
    return reply;
  }
}

/** An identifier in double quotes, doubling any quote inside (PostgreSQL 17 documentation, "Identifiers and Key Words"). */
export function quoteIdentifier(name: string): string {
  return `"${name.replaceAll('"', '""')}"`;
}
