/**
 * The MLLP listener: accepts TCP connections, reads framed messages (mllp.ts), stores each in its
 * own transaction (receive.ts) and only then writes its acknowledgement (ack.ts) back on the same
 * connection. Messages are taken one at a time across all connections (the store has one
 * writer). A message that cannot be stored for a reason other than its content (the disk, the
 * store) is not acknowledged: the connection is closed and the sender sends it again.
 */
import net from 'node:net';
import type { Receipt } from '../ingest/receipt.js';
import { buildAck } from './ack.js';
import { FrameDecoder, frame } from './mllp.js';
import { receiveHl7, type MessageOutcome, type ReceiveDeps } from './receive.js';
import { MAX_FRAME_BYTES } from './mllp.js';

export interface ListenerOptions {
  host: string;
  port: number;
  deps: ReceiveDeps;
  log: (line: string) => void;
  /** After a message is stored and acknowledged: receipts, outputs, alerts. Never before the ACK. */
  afterStored?: (receipt: Receipt) => Promise<void> | void;
  maxFrameBytes?: number;
}

export interface RunningListener {
  /** The port bound (the one asked for, or the one the system gave for port 0). */
  port: number;
  /** Stops accepting, finishes the message in hand, then closes every connection. */
  close(): Promise<void>;
}

/** A safe file-like name for a received message: sending facility and control ID from its MSH. */
export function messageName(bytes: Buffer): string {
  const head = bytes.subarray(0, 4096).toString('latin1');
  const first = head.split(/[\r\n]/)[0] ?? '';
  const separator = first.charAt(3);
  const fields = separator === '' ? [] : first.split(separator);
  const clean = (text: string | undefined) =>
    (text ?? '')
      .split(first.charAt(4) || '^')[0]!
      .replace(/[^A-Za-z0-9._-]/g, '_')
      .slice(0, 64) || 'unknown';
  // fields[0] is MSH and fields[1] MSH-2: MSH-n is fields[n - 1].
  return `mllp_${clean(fields[3])}_${clean(fields[9])}.hl7`;
}

/**
 * Starts listening. One function over 80 lines on purpose: its handlers share the open
 * connections, the one queue of messages and the closing flag, which no other code may touch.
 */
export function startListener(options: ListenerOptions): Promise<RunningListener> {
  const sockets = new Set<net.Socket>();
  let last: Promise<unknown> = Promise.resolve();
  const inTurn = (task: () => Promise<void>): Promise<void> => {
    const run = last.then(task);
    last = run.catch(() => undefined);
    return run;
  };
  let closing = false;

  const handleFrame = async (socket: net.Socket, bytes: Buffer): Promise<void> => {
    if (socket.destroyed) return;
    const name = messageName(bytes);
    let result: { receipt: Receipt; outcomes: MessageOutcome[] };
    try {
      result = receiveHl7({ name, bytes, source: 'mllp' }, options.deps);
    } catch (error) {
      options.log(`${name}: not stored (${(error as Error).message}); not acknowledged, the sender will send it again`);
      socket.destroy();
      return;
    }
    const outcome = result.outcomes[0];
    const ack = buildAck({
      message: outcome?.message,
      controlId: outcome?.controlId ?? '',
      code: outcome?.ack ?? 'AR',
      errors: outcome?.errors ?? [],
      ackControlId: `ACK-${outcome?.controlId || result.receipt.sha256.slice(0, 12)}`,
      now: options.deps.now(),
    });
    socket.write(frame(ack));
    options.log(
      `${name}: ${outcome?.ack ?? 'AR'}${outcome?.repeat ? ' (stored before)' : ''}, ${result.receipt.rows.accepted} stored, ${result.receipt.rows.rejected} refused${outcome && outcome.errors.length > 0 ? `: ${outcome.errors[0]!.code} at ${outcome.errors[0]!.location.segment}${outcome.errors[0]!.location.field === undefined ? '' : `-${outcome.errors[0]!.location.field}`}` : ''}`,
    );
    if (options.afterStored) await options.afterStored(result.receipt);
  };

  const tooLarge = (socket: net.Socket, size: number): void => {
    socket.write(
      frame(
        buildAck({
          message: undefined,
          controlId: '',
          code: 'AR',
          errors: [
            {
              code: 'malformed-message',
              location: { segment: 'MSH', sequence: undefined, field: undefined, line: 1 },
              text: `the frame holds ${size} bytes; at most ${options.maxFrameBytes ?? MAX_FRAME_BYTES} are read`,
            },
          ],
          ackControlId: 'ACK-TOO-LARGE',
          now: options.deps.now(),
        }),
      ),
    );
    options.log(`a frame of ${size} bytes refused (AR): over the size limit`);
  };

  const server = net.createServer((socket) => {
    sockets.add(socket);
    const decoder = new FrameDecoder(options.maxFrameBytes ?? MAX_FRAME_BYTES);
    socket.on('data', (chunk: Buffer) => {
      for (const event of decoder.push(chunk)) {
        if (closing) return;
        if (event.kind === 'too-large') tooLarge(socket, event.bytes);
        else void inTurn(() => handleFrame(socket, event.bytes));
      }
    });
    socket.on('error', (error) => options.log(`connection error: ${error.message}`));
    socket.on('close', () => sockets.delete(socket));
  });

  return new Promise((resolve, reject) => {
    server.once('error', reject);
    server.listen(options.port, options.host, () => {
      server.off('error', reject);
      const address = server.address();
      const port = typeof address === 'object' && address !== null ? address.port : options.port;
      resolve({
        port,
        close: async () => {
          closing = true;
          const closed = new Promise<void>((done) => server.close(() => done()));
          await last;
          for (const socket of sockets) socket.end();
          for (const socket of sockets) socket.destroy();
          await closed;
        },
      });
    });
  });
}
