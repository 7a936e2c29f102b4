import { MessageChannel, Worker } from 'node:worker_threads';
import { afterEach, describe, expect, it } from 'vitest';
import { awaitReply, countReply } from '../../../src/store/pg/replyWait.js';

/**
 * The hand-over between a blocked caller and the thread that answers it, driven by a stand-in
 * worker whose steps (post a reply, count it, wake the caller) are scheduled by the test, so that
 * a wake-up can come early or late as it does when the answering thread is preempted under load.
 * Atomics.wait returns when woken by Atomics.notify, whatever the value (ECMAScript 2024,
 * 25.4.3.14 and 25.4.3.15): a woken caller must look again rather than take the wake-up for its answer.
 */
const STAND_IN = `
const { parentPort, workerData } = require('node:worker_threads');
const count = new Int32Array(workerData.count);
const port = workerData.port;
parentPort.on('message', (steps) => {
  let at = 0;
  for (const step of steps) {
    at += step.after;
    setTimeout(() => {
      if (step.do === 'post') port.postMessage(step.reply);
      if (step.do === 'count') Atomics.add(count, 0, 1);
      Atomics.notify(count, 0);
    }, at);
  }
});
`;

type Step = { after: number; do: 'post' | 'count' | 'wake'; reply?: string };

let worker: Worker | undefined;
afterEach(async () => {
  await worker?.terminate();
  worker = undefined;
});

function standIn(): { run: (steps: Step[]) => void; count: Int32Array; port: MessageChannel['port1'] } {
  const count = new Int32Array(new SharedArrayBuffer(4));
  const channel = new MessageChannel();
  worker = new Worker(STAND_IN, {
    eval: true,
    workerData: { count: count.buffer, port: channel.port2 },
    transferList: [channel.port2],
  });
  const started = worker;
  return { run: (steps) => started.postMessage(steps), count, port: channel.port1 };
}

describe('waiting for the n-th reply of a worker', () => {
  it('goes back to waiting when woken before its reply is posted', async () => {
    const { run, count, port } = standIn();
    // A wake-up with nothing posted (the late wake of an earlier reply), then the reply 60 ms on.
    run([
      { after: 20, do: 'wake' },
      { after: 60, do: 'post', reply: 'first' },
      { after: 0, do: 'count' },
    ]);
    expect(awaitReply<string>(port, count, 1, 5_000)).toEqual({ kind: 'reply', reply: 'first' });
    port.close();
  });

  it('takes a reply that was posted but not yet counted, and is not misled when that count comes during the next request', () => {
    const { run, count, port } = standIn();
    // Reply 1 posted; its count (and wake-up) delayed until the caller waits for reply 2.
    run([
      { after: 10, do: 'post', reply: 'one' },
      { after: 150, do: 'count' },
      { after: 60, do: 'post', reply: 'two' },
      { after: 0, do: 'count' },
    ]);
    expect(awaitReply<string>(port, count, 1, 5_000)).toEqual({ kind: 'reply', reply: 'one' });
    expect(Atomics.load(count, 0)).toBe(0);
    const before = performance.now();
    expect(awaitReply<string>(port, count, 2, 5_000)).toEqual({ kind: 'reply', reply: 'two' });
    // It waited through the late count of reply 1 for reply 2 (posted about 210 ms after the start).
    expect(performance.now() - before).toBeGreaterThan(100);
    port.close();
  });

  it('gives up at its deadline when no reply comes, even if woken meanwhile', () => {
    const { run, count, port } = standIn();
    run([
      { after: 10, do: 'wake' },
      { after: 10, do: 'wake' },
    ]);
    const before = performance.now();
    const awaited = awaitReply<string>(port, count, 1, 200);
    expect(awaited).toEqual({ kind: 'timed-out' });
    expect(performance.now() - before).toBeGreaterThanOrEqual(195);
    port.close();
  });

  it('counts a reply and wakes a waiter in one step', () => {
    const count = new Int32Array(new SharedArrayBuffer(4));
    countReply(count);
    countReply(count);
    expect(Atomics.load(count, 0)).toBe(2);
  });
});
