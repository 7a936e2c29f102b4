/**
 * A de-duplicated first-in-first-out queue that runs one job at a time. The pipeline writes
 * to one SQLite store, and one file at a time keeps receipts and archive moves in drop order.
 */

export interface SerialQueueHooks {
  /** Called with whatever the worker threw; the queue carries on with the next key. */
  onError?: (error: unknown, key: string) => void;
  /** Called after a key has left the queue (worker done or failed); the key may be offered again from here. */
  onSettled?: (key: string) => void;
}

export interface SerialQueue {
  /** Adds a key unless it is already queued or running, or the queue is stopped. True when added. */
  offer(key: string): boolean;
  /** Queued or running. */
  has(key: string): boolean;
  /** Running now. */
  isRunning(key: string): boolean;
  /** The running key, or null. */
  readonly current: string | null;
  /** Keys waiting, not counting the running one. */
  readonly pending: number;
  /** Resolves when nothing is queued or running. */
  idle(): Promise<void>;
  /**
   * Stops taking work: drops the waiting keys (returned, in order) and resolves once the running
   * job has finished. Later `offer` calls return false.
   */
  stop(): Promise<string[]>;
}

/**
 * Creates a serial queue. Membership is by key (a file path): a key already queued or running
 * is not added twice; once its job has settled it may be added again, because a re-drop of the
 * same name may be new content (the content hash downstream decides).
 *
 * @param worker the job, run for one key at a time, in offer order.
 * @param hooks `onError` receives the worker's failures (never rethrown; an error inside
 *   `onError` itself is swallowed so that one bad file cannot stop the watcher), `onSettled`
 *   runs after each key leaves.
 * @throws never; worker errors go to `onError`.
 * @see Knuth 1997, The Art of Computer Programming vol. 1, 2.2.1 (queues, FIFO order).
 */
export function createSerialQueue(worker: (key: string) => Promise<void>, hooks: SerialQueueHooks = {}): SerialQueue {
  // A Set iterates in insertion order: FIFO with O(1) membership and removal.
  const waiting = new Set<string>();
  let running: string | null = null;
  let runningDone: Promise<void> = Promise.resolve();
  let stopped = false;
  let idleWaiters: (() => void)[] = [];

  const settleIdle = (): void => {
    if (running !== null || waiting.size > 0) return;
    const waiters = idleWaiters;
    idleWaiters = [];
    for (const resolve of waiters) resolve();
  };

  const safely = (fn: () => void): void => {
    try {
      fn();
    } catch {
      // A failing hook must not wedge the queue; the hook owner logs its own failures.
    }
  };

  const pump = (): void => {
    if (running !== null) return;
    if (stopped) {
      waiting.clear();
      settleIdle();
      return;
    }
    const next = waiting.values().next();
    if (next.done) {
      settleIdle();
      return;
    }
    const key = next.value;
    waiting.delete(key);
    running = key;
    runningDone = (async () => {
      try {
        await worker(key);
      } catch (error) {
        safely(() => hooks.onError?.(error, key));
      } finally {
        running = null;
        safely(() => hooks.onSettled?.(key));
        pump();
      }
    })();
  };

  return {
    offer(key) {
      if (stopped || waiting.has(key) || running === key) return false;
      waiting.add(key);
      // Start on a microtask so that a burst of offers from one event handler is queued first.
      queueMicrotask(pump);
      return true;
    },
    has: (key) => running === key || waiting.has(key),
    isRunning: (key) => running === key,
    get current() {
      return running;
    },
    get pending() {
      return waiting.size;
    },
    idle() {
      if (running === null && waiting.size === 0) return Promise.resolve();
      return new Promise<void>((resolve) => idleWaiters.push(resolve));
    },
    async stop() {
      stopped = true;
      const dropped = [...waiting];
      waiting.clear();
      await runningDone;
      settleIdle();
      return dropped;
    },
  };
}
