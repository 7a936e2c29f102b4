/**
 * The messages between a synchronous PostgreSQL connection (syncConnection.ts, the caller's
 * thread) and its worker (syncWorker.ts). Each request is answered by exactly one reply on the
 * reply port, after which the worker counts it in the shared counter and wakes the caller.
 */
import type { MessagePort } from 'node:worker_threads';

/** A value passed as a query parameter or a COPY field. Bytes go as bytea. */
export type SqlValue = string | number | bigint | boolean | null | Uint8Array;
/** A query parameter: a value, or an array of values (node-postgres sends it as a PostgreSQL array). */
export type SqlParam = SqlValue | readonly SqlValue[];

export type ToSyncWorker =
  | { op: 'connect' }
  | { op: 'query'; text: string; params: readonly SqlParam[] }
  | { op: 'copyStart'; sql: string }
  | { op: 'copyData'; chunk: string }
  | { op: 'copyEnd' }
  | { op: 'close' };

/** What the server said of a failed statement (the fields of its ErrorResponse). */
export interface ServerErrorFields {
  message: string;
  code?: string;
  detail?: string;
  hint?: string;
  severity?: string;
  position?: string;
  where?: string;
  table?: string;
  column?: string;
  constraint?: string;
}

export type FromSyncWorker =
  | { ok: true; rows: Record<string, unknown>[]; rowCount: number }
  | { ok: false; error: ServerErrorFields };

/** Sent once, with the worker's start: where to connect and how to answer. */
export interface SyncWorkerData {
  connectionString: string;
  /** Int32Array over a SharedArrayBuffer: [0] counts the replies posted on the reply port (replyWait.ts). */
  repliesPosted: SharedArrayBuffer;
  replies: MessagePort;
}
