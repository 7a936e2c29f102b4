/**
 * The worker side of a synchronous PostgreSQL connection: one node-postgres client, driven by
 * the requests of syncConnection.ts one at a time. Every request gets one reply on the reply
 * port, then it is counted in the shared counter and the caller woken (replyWait.ts). Nothing here throws
 * past a request: a failure is a reply carrying the server's error fields.
 */
import { parentPort, workerData } from 'node:worker_threads';
import pg from 'pg';
import { type CopyStreamQuery, from as copyFrom } from 'pg-copy-streams';
import { countReply } from './replyWait.js';
import type { FromSyncWorker, ServerErrorFields, SyncWorkerData, ToSyncWorker } from './syncProtocol.js';

const INT8_OID = 20;

const data = workerData as SyncWorkerData;
const repliesPosted = new Int32Array(data.repliesPosted);
const replies = data.replies;

// bigint columns (ids, counts, the 52-bit content key) as JavaScript numbers, as the SQLite
// store gives them: every stored integer fits in 53 bits.
const types = {
  getTypeParser: ((oid: number, format?: 'text' | 'binary') =>
    oid === INT8_OID && format !== 'binary'
      ? (text: string) => Number(text)
      : pg.types.getTypeParser(oid, format)) as typeof pg.types.getTypeParser,
};

const client = new pg.Client({ connectionString: data.connectionString, types });
// A connection lost between requests is reported by the next request; without a listener the
// 'error' event would end the worker.
let lost: Error | undefined;
client.on('error', (error) => {
  lost = error;
});

/** The COPY in progress and the first error it raised (the server refused a row, the connection broke). */
let copy: { stream: CopyStreamQuery; failure: Error | undefined } | undefined;

function reply(message: FromSyncWorker): void {
  replies.postMessage(message);
  countReply(repliesPosted);
}

function errorFields(error: unknown): ServerErrorFields {
  const e = error as Partial<ServerErrorFields> & { message?: string };
  const fields: ServerErrorFields = { message: e.message ?? String(error) };
  for (const key of [
    'code',
    'detail',
    'hint',
    'severity',
    'position',
    'where',
    'table',
    'column',
    'constraint',
  ] as const) {
    const value = e[key];
    if (typeof value === 'string') fields[key] = value;
  }
  return fields;
}

/** Writes one chunk, waiting for the stream to drain when its buffer is full. */
async function writeChunk(into: NonNullable<typeof copy>, chunk: string): Promise<void> {
  if (into.failure !== undefined) throw into.failure;
  if (into.stream.write(chunk, 'utf8')) return;
  await new Promise<void>((resolve, reject) => {
    into.stream.once('drain', resolve);
    into.stream.once('error', reject);
  });
}

/** Ends the COPY: 'finish' once the server has taken every row, 'error' when it refused one. */
async function endCopy(into: NonNullable<typeof copy>): Promise<number> {
  if (into.failure !== undefined) throw into.failure;
  await new Promise<void>((resolve, reject) => {
    into.stream.once('finish', resolve);
    into.stream.once('error', reject);
    into.stream.end();
  });
  return into.stream.rowCount;
}

async function handle(request: ToSyncWorker): Promise<FromSyncWorker> {
  if (lost !== undefined) throw lost;
  switch (request.op) {
    case 'connect':
      await client.connect();
      return { ok: true, rows: [], rowCount: 0 };
    case 'query': {
      const result: pg.QueryResult | pg.QueryResult[] = await client.query({
        text: request.text,
        values: request.params as unknown[],
      });
      // Several statements in one text (no parameters) answer with one result each: the last counts.
      const last = Array.isArray(result) ? result[result.length - 1] : result;
      return { ok: true, rows: last?.rows ?? [], rowCount: last?.rowCount ?? 0 };
    }
    case 'copyStart': {
      const into = { stream: client.query(copyFrom(request.sql)), failure: undefined as Error | undefined };
      into.stream.on('error', (error: Error) => {
        into.failure ??= error;
      });
      copy = into;
      return { ok: true, rows: [], rowCount: 0 };
    }
    case 'copyData':
      if (copy === undefined) throw new Error('COPY data sent with no COPY started');
      await writeChunk(copy, request.chunk);
      return { ok: true, rows: [], rowCount: 0 };
    case 'copyEnd': {
      if (copy === undefined) throw new Error('COPY ended with no COPY started');
      const into = copy;
      copy = undefined;
      return { ok: true, rows: [], rowCount: await endCopy(into) };
    }
    case 'close':
      await client.end();
      return { ok: true, rows: [], rowCount: 0 };
  }
}

parentPort?.on('message', (request: ToSyncWorker) => {
  handle(request).then(reply, (error: unknown) => {
    // A failed COPY is over: the caller rolls back, and the next request is a new statement.
    if (request.op === 'copyData') copy = undefined;
    reply({ ok: false, error: errorFields(error) });
  });
});
