/** A plain TCP client for MLLP tests: sends frames, collects the acknowledgements that come back. */
import net from 'node:net';
import { FrameDecoder } from '../../src/hl7/mllp.js';

export interface Exchange {
  acks: string[];
  /** The server closed the connection before every acknowledgement came. */
  closedEarly: boolean;
}

/** Sends `frames` (already framed bytes) and waits for `expected` acknowledgements or the close. */
export function exchange(
  port: number,
  frames: readonly Buffer[],
  expected = frames.length,
  timeoutMs = 20_000,
): Promise<Exchange> {
  return new Promise((resolve, reject) => {
    const socket = net.connect({ port, host: '127.0.0.1' });
    const decoder = new FrameDecoder();
    const acks: string[] = [];
    const timer = setTimeout(() => {
      socket.destroy();
      reject(new Error(`no acknowledgement within ${timeoutMs} ms (got ${acks.length} of ${expected})`));
    }, timeoutMs);
    const done = (closedEarly: boolean) => {
      clearTimeout(timer);
      socket.destroy();
      resolve({ acks, closedEarly });
    };
    socket.on('connect', () => {
      for (const frame of frames) socket.write(frame);
    });
    socket.on('data', (chunk: Buffer) => {
      for (const event of decoder.push(chunk)) if (event.kind === 'frame') acks.push(event.bytes.toString('utf8'));
      if (acks.length >= expected) done(false);
    });
    socket.on('close', () => done(acks.length < expected));
    socket.on('error', () => undefined);
  });
}
