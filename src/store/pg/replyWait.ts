/**
 * The caller's half of the hand-over between a synchronous PostgreSQL connection and its worker
 * thread (syncConnection.ts, syncWorker.ts). The shared Int32 counts the replies the worker has
 * posted: the worker posts a reply on the port, then adds one and wakes the caller. The caller,
 * having sent its n-th request, waits until the count reaches n and takes the reply from the port.
 *
 * A count rather than a flag set and cleared: a worker that is preempted between setting a flag
 * and waking the caller wakes it late, during the next request, when the caller has already
 * taken the earlier reply and cleared the flag again; a caller that took that late wake-up for
 * its answer would find the port empty and give up a healthy connection. Here a wake-up only
 * sends the caller back to look at the count: an early or late one costs a loop, never an answer.
 * (ECMAScript 2024, 25.4.3.14 Atomics.wait: it returns at once when the value is no longer the
 * one expected, so a reply counted between the look and the wait is never missed.)
 */
import { type MessagePort, receiveMessageOnPort } from 'node:worker_threads';

/** What waiting for a reply came to: the reply, or a count of replies that did not arrive in time. */
export type AwaitedReply<Reply> = { kind: 'reply'; reply: Reply } | { kind: 'timed-out' };

/**
 * Blocks this thread until the `repliesExpected`-th reply is on `port` or `timeoutMs` has passed.
 * `count[0]` is the number of replies the other thread has posted (it posts before it counts).
 */
export function awaitReply<Reply>(
  port: MessagePort,
  count: Int32Array,
  repliesExpected: number,
  timeoutMs: number,
  now: () => number = () => performance.now(),
): AwaitedReply<Reply> {
  const deadline = now() + timeoutMs;
  for (;;) {
    const received = receiveMessageOnPort(port);
    if (received !== undefined) return { kind: 'reply', reply: received.message as Reply };
    const counted = Atomics.load(count, 0);
    const left = deadline - now();
    if (left <= 0) return { kind: 'timed-out' };
    // Waiting on the count's present value returns at once if it has moved, so this loop never
    // sleeps through a reply. Counted but not yet on the port cannot happen (the reply is posted
    // before it is counted); should it, the loop looks again each millisecond rather than spin.
    Atomics.wait(count, 0, counted, counted < repliesExpected ? left : Math.min(left, 1));
  }
}

/** The worker's half: the reply is already posted; count it and wake the caller. */
export function countReply(count: Int32Array): void {
  Atomics.add(count, 0, 1);
  Atomics.notify(count, 0);
}
