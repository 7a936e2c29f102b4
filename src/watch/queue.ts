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
  return new SerialJobQueue(worker, hooks);
}

/** Runs a hook; a failing hook must not wedge the queue (the hook owner logs its own failures). */
function safely(fn: () => void): void {
  try {
    fn();
  } catch {
    // Swallowed on purpose: see above.
  }
}

class SerialJobQueue implements SerialQueue {
  // A Set iterates in insertion order: FIFO with O(1) membership and removal.
  private readonly waiting = new Set<string>();
  private running: string | null = null;
  private runningDone: Promise<void> = Promise.resolve();
  private stopped = false;
  private idleWaiters: (() => void)[] = [];
  private readonly pumpSoon = (): void => this.pump();

  constructor(
    private readonly worker: (key: string) => Promise<void>,
    private readonly hooks: SerialQueueHooks,
  ) {}

  offer(key: string): boolean {
    if (this.stopped || this.waiting.has(key) || this.running === key) return false;
    this.waiting.add(key);
    // Start on a microtask so that a burst of offers from one event handler is queued first.
    queueMicrotask(this.pumpSoon);
    return true;
  }

  has(key: string): boolean {
    return this.running === key || this.waiting.has(key);
  }

  isRunning(key: string): boolean {
    return this.running === key;
  }

  get current(): string | null {
    return this.running;
  }

  get pending(): number {
    return this.waiting.size;
  }

  idle(): Promise<void> {
    if (this.running === null && this.waiting.size === 0) return Promise.resolve();
    return new Promise<void>((resolve) => this.idleWaiters.push(resolve));
  }

  async stop(): Promise<string[]> {
    this.stopped = true;
    const dropped = [...this.waiting];
    this.waiting.clear();
    await this.runningDone;
    this.settleIdle();
    return dropped;
  }

  private settleIdle(): void {
    if (this.running !== null || this.waiting.size > 0) return;
    const waiters = this.idleWaiters;
    this.idleWaiters = [];
    for (const resolve of waiters) resolve();
  }

  /** Starts the next waiting key unless one is running. */
  private pump(): void {
    if (this.running !== null) return;
    if (this.stopped) {
      this.waiting.clear();
      this.settleIdle();
      return;
    }
    const next = this.waiting.values().next();
    if (next.done) {
      this.settleIdle();
      return;
    }
    const key = next.value;
    this.waiting.delete(key);
    this.running = key;
    this.runningDone = this.run(key);
  }

  private async run(key: string): Promise<void> {
    try {
      await this.worker(key);
    } catch (error) {
      safely(() => this.hooks.onError?.(error, key));
    } finally {
      this.running = null;
      safely(() => this.hooks.onSettled?.(key));
      this.pump();
    }
  }
}
