/**
 * The drop-folder watcher: chokidar events and a start-up sweep feed one stability gate per
 * file; files that are ready go through a serial de-duplicated queue to `onFile`.
 *
 *   event / sweep -> ignored? -> stability gate (concurrent, one per path) -> FIFO -> onFile
 *
 * chokidar's `awaitWriteFinish` is not used; the gate replaces it, because (1) it does not
 * apply to files already present at start-up, which must pass the same gate; (2) it compares
 * size only, the gate compares size and mtime; (3) its pending timers live inside chokidar,
 * where a stop cannot cancel them and a test cannot drive them with a fake clock.
 */
import { promises as fsp } from 'node:fs';
import path from 'node:path';
import { performance } from 'node:perf_hooks';
import { type FSWatcher, watch as chokidarWatch } from 'chokidar';
import { inspectInput } from '../inboxFiles.js';
import { DEFAULT_EXTENSIONS, ignoreReason, inboxMatcher, normaliseExtensions } from './ignore.js';
import { createSerialQueue, type SerialQueue } from './queue.js';
import { sameStamp, stabilitySettings, waitUntilStable, type FileStamp } from './stability.js';

export interface WatchInboxOptions {
  /** The drop folder; must exist. Relative paths resolve against `process.cwd()`. */
  inbox: string;
  /** The pipeline for one file (absolute path). Called once at a time, never concurrently. */
  onFile: (path: string) => Promise<void>;
  /**
   * Failures that do not stop the watcher: `onFile` throwing (with its path), a stat refused
   * (EACCES), a chokidar `error` (no path). Default: a line through `log`, else `console.error`.
   */
  onError?: (error: unknown, path?: string) => void;
  /** Poll the folder (chokidar `usePolling`) instead of OS events: for network shares. */
  poll?: boolean;
  /** Quiet period before a file is read, ms >= 0. Default 2000. */
  stableMs?: number;
  /** Interval of the gate's stat polls, ms > 0. Default a quarter of `stableMs`, at least 10. */
  gatePollMs?: number;
  /** chokidar polling interval with `poll`, ms. Default 1000 (a share is slow, drops are rare). */
  pollIntervalMs?: number;
  /** Accepted extensions. Default DEFAULT_EXTENSIONS (ignore.ts): text exports and spreadsheets. */
  extensions?: readonly string[];
  /** Resolves (or rejects) when the watcher should stop. */
  stop: Promise<void>;
  /** One line per event worth telling an operator (no trailing newline). */
  log?: (line: string) => void;
}

function describeError(error: unknown): string {
  return error instanceof Error ? error.message : String(error);
}

function isMissing(error: unknown): boolean {
  const code = (error as { code?: unknown } | null)?.code;
  return code === 'ENOENT' || code === 'ENOTDIR';
}

/** size + mtime of a regular file, or null when it is gone or not a regular file. */
async function statFile(filePath: string): Promise<FileStamp | null> {
  try {
    const stats = await fsp.stat(filePath);
    return stats.isFile() ? { size: stats.size, mtimeMs: stats.mtimeMs } : null;
  } catch (error) {
    if (isMissing(error)) return null;
    throw error;
  }
}

/**
 * Watches a drop folder and calls `onFile` once per file that has arrived and stopped changing.
 *
 * - chokidar with `depth: 0`, `ignoreInitial: true`, the name rules of `ignoreReason`, `add` and
 *   `change` handled, `unlink` ignored (a vanished file is a no-op), `error` reported.
 * - An entry that is not a regular file (FIFO, socket, device, a link to one) is logged once as
 *   skipped and never opened; a link to a regular file is read like the file.
 * - After chokidar is ready, a sweep (readdir) passes files already present through the same
 *   gate; a file seen by both the sweep and an event is gated once.
 * - A path already gating, queued or running is not taken twice. An event for the running path
 *   marks it for one more pass after `onFile` returns (the gate then finds it gone, if the
 *   pipeline archived it, or changed). Right before `onFile`, the file is stat'ed again; if it
 *   changed while it waited in the queue, it goes back to the gate.
 * - On `stop`: gates are cancelled, the current `onFile` finishes, the rest of the queue is
 *   dropped (those files stay in the inbox for the next start), `watcher.close()` is awaited.
 *
 * @returns a promise that resolves after a clean stop.
 * @throws (rejects) RangeError for bad `stableMs`, `gatePollMs` or `extensions`; Error when the
 *   inbox is not a directory. Nothing else rejects: later failures go to `onError`.
 * @see chokidar 5 README (options `depth`, `ignoreInitial`, `ignored`, `usePolling`, `awaitWriteFinish`).
 */
export async function watchInbox(options: WatchInboxOptions): Promise<void> {
  const setup = await watchSetup(options);
  const log = options.log ?? (() => {});
  const inboxWatch = new InboxWatch(options.onFile, setup, log, errorReporter(options));
  const stopRequested = new Promise<void>((resolve) => {
    options.stop.then(
      () => resolve(),
      () => resolve(),
    );
  });
  const watcher = openWatcher(setup, options.poll ?? false, inboxWatch);
  try {
    const ready = new Promise<void>((resolve) => watcher.once('ready', () => resolve()));
    await Promise.race([ready, stopRequested]);
    if (!inboxWatch.stopping) {
      log(`watching ${setup.inbox}${options.poll ? ' (polling)' : ''}, quiet period ${setup.settings.stableMs} ms`);
      await inboxWatch.sweep();
    }
    await stopRequested;
  } finally {
    await inboxWatch.stop();
    await watcher.close();
    log('stopped');
  }
}

/** What a watch runs with, checked: the inbox (a folder), the gate's settings, the extensions, the poll interval. */
interface WatchSetup {
  inbox: string;
  settings: ReturnType<typeof stabilitySettings>;
  extensions: readonly string[];
  pollIntervalMs: number;
}

async function watchSetup(options: WatchInboxOptions): Promise<WatchSetup> {
  const inbox = path.resolve(options.inbox);
  const settings = stabilitySettings({ stableMs: options.stableMs, pollMs: options.gatePollMs });
  const extensions = normaliseExtensions(options.extensions ?? DEFAULT_EXTENSIONS);
  const pollIntervalMs = options.pollIntervalMs ?? 1000;
  if (!Number.isFinite(pollIntervalMs) || pollIntervalMs <= 0) {
    throw new RangeError(`\`pollIntervalMs\` must be a finite number > 0, got ${String(pollIntervalMs)}`);
  }
  const inboxStats = await fsp.stat(inbox).catch((error: unknown) => {
    throw new Error(`inbox ${inbox} cannot be watched: ${describeError(error)}`, { cause: error });
  });
  if (!inboxStats.isDirectory()) throw new Error(`inbox ${inbox} is not a directory`);
  return { inbox, settings, extensions, pollIntervalMs };
}

type ErrorReporter = (error: unknown, filePath?: string) => void;

/** Where failures that do not stop the watcher go: `onError`, else a `log` line, else stderr. */
function errorReporter(options: WatchInboxOptions): ErrorReporter {
  return (error, filePath) => {
    try {
      if (options.onError) options.onError(error, filePath);
      else if (options.log) options.log(`error${filePath ? ` ${filePath}` : ''}: ${describeError(error)}`);
      else console.error(`ropewatch watch: ${filePath ? `${filePath}: ` : ''}${describeError(error)}`);
    } catch {
      // An error handler that throws must not take the watcher down.
    }
  };
}

/** chokidar on the inbox: `add` and `change` go to the watch, `error` to its reporter. */
function openWatcher(setup: WatchSetup, poll: boolean, inboxWatch: InboxWatch): FSWatcher {
  const watcher = chokidarWatch(setup.inbox, {
    depth: 0,
    ignoreInitial: true,
    ignored: inboxMatcher(setup.inbox, setup.extensions),
    usePolling: poll,
    interval: setup.pollIntervalMs,
    binaryInterval: setup.pollIntervalMs,
    persistent: true,
  });
  watcher.on('add', (filePath) => inboxWatch.consider(filePath, 'added'));
  watcher.on('change', (filePath) => inboxWatch.consider(filePath, 'changed'));
  watcher.on('error', (error) => inboxWatch.report(error));
  return watcher;
}

/**
 * Pending gate sleeps, woken all at once on stop. (One AbortSignal listener per sleeping gate
 * would trip Node's listener-leak warning on a burst of drops.)
 */
class Sleepers {
  private readonly wakers = new Set<() => void>();

  sleep(ms: number): Promise<void> {
    return new Promise<void>((resolve) => {
      const wake = (): void => {
        clearTimeout(timer);
        this.wakers.delete(wake);
        resolve();
      };
      const timer = setTimeout(wake, ms);
      this.wakers.add(wake);
    });
  }

  wakeAll(): void {
    for (const wake of [...this.wakers]) wake();
  }
}

/** One watch of the inbox: the paths gating, queued and to look at again, and the queue to `onFile`. */
class InboxWatch {
  stopping = false;
  private readonly gating = new Set<string>();
  private readonly gates = new Set<Promise<void>>();
  private readonly again = new Set<string>();
  private readonly readyStamps = new Map<string, FileStamp>();
  private readonly sleepers = new Sleepers();
  private readonly probe = {
    stat: statFile,
    now: () => performance.now(),
    sleep: (ms: number) => this.sleepers.sleep(ms),
    stopped: () => this.stopping,
  };
  private readonly queue: SerialQueue;

  constructor(
    private readonly onFile: (path: string) => Promise<void>,
    private readonly setup: WatchSetup,
    private readonly log: (line: string) => void,
    readonly report: ErrorReporter,
  ) {
    this.queue = createSerialQueue((filePath) => this.readQueued(filePath), {
      onError: (error, filePath) => this.report(error, filePath),
      onSettled: (filePath) => {
        if (this.again.delete(filePath)) this.consider(filePath, 'changed');
      },
    });
  }

  private name(filePath: string): string {
    return path.relative(this.setup.inbox, filePath);
  }

  /** A path seen by an event or the sweep: gated unless ignored, already gating, queued or running. */
  consider(candidate: string, why: string): void {
    if (this.stopping) return;
    const filePath = path.resolve(this.setup.inbox, candidate);
    if (ignoreReason(filePath, { inbox: this.setup.inbox, extensions: this.setup.extensions }) !== null) return;
    if (this.gating.has(filePath)) return; // the running gate sees the change itself
    if (this.queue.isRunning(filePath)) {
      this.again.add(filePath);
      return;
    }
    if (this.queue.has(filePath)) return; // the re-stat before onFile catches a change
    this.gating.add(filePath);
    this.log(`seen ${this.name(filePath)} (${why})`);
    const running = this.gate(filePath);
    this.gates.add(running);
    void running.finally(() => this.gates.delete(running));
  }

  /** Passes the files already present (everything but folders) through the same gate. */
  async sweep(): Promise<void> {
    try {
      const entries = await fsp.readdir(this.setup.inbox, { withFileTypes: true });
      // Everything but folders: the gate logs a FIFO, socket or device as skipped.
      const names = entries
        .filter((entry) => !entry.isDirectory())
        .map((entry) => entry.name)
        .sort();
      for (const entry of names) this.consider(path.join(this.setup.inbox, entry), 'present at start');
    } catch (error) {
      this.report(error);
    }
  }

  /** Cancels the gates, lets the current file finish and drops the rest of the queue. */
  async stop(): Promise<void> {
    this.stopping = true;
    this.sleepers.wakeAll();
    const dropped = await this.queue.stop();
    if (dropped.length > 0) this.log(`stop: ${dropped.length} file(s) left in the inbox for the next start`);
    await Promise.allSettled([...this.gates]);
  }

  private async gate(filePath: string): Promise<void> {
    try {
      // A FIFO, socket or device is never gated or read (opening a FIFO blocks until a writer
      // comes, fifo(7)); a link is judged by its target.
      const entry = inspectInput(filePath);
      if (entry.kind === 'special') {
        this.log(`skip ${this.name(filePath)}: not a regular file but ${entry.what}; not read`);
        return;
      }
      const result = await waitUntilStable(filePath, this.probe, this.setup.settings);
      if (result.kind === 'ready' && !this.stopping) {
        this.readyStamps.set(filePath, result.stamp);
        this.queue.offer(filePath);
      } else if (result.kind === 'vanished') {
        this.log(`skip ${this.name(filePath)}: gone before it settled`);
      }
    } catch (error) {
      this.report(error, filePath);
    } finally {
      this.gating.delete(filePath);
    }
  }

  /** Right before `onFile`: a file gone is skipped, one changed while queued goes back to the gate. */
  private async readQueued(filePath: string): Promise<void> {
    const expected = this.readyStamps.get(filePath);
    this.readyStamps.delete(filePath);
    const stamp = await statFile(filePath);
    if (stamp === null) {
      this.log(`skip ${this.name(filePath)}: gone before it was read`);
      return;
    }
    if (expected !== undefined && !sameStamp(expected, stamp)) {
      this.log(`wait ${this.name(filePath)}: changed while queued`);
      this.again.add(filePath);
      return;
    }
    this.log(`read ${this.name(filePath)} (${stamp.size} bytes)`);
    await this.onFile(filePath);
  }
}
