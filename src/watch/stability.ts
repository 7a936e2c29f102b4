/**
 * The stability gate: a file dropped into the inbox is read only once it has stopped changing.
 * Pure apart from the injected `stat`, clock and `sleep`, so it is tested with a fake clock.
 */

/** What the gate compares between polls. */
export interface FileStamp {
  /** bytes */
  readonly size: number;
  /** modification time, ms since the epoch (as `fs.Stats.mtimeMs`) */
  readonly mtimeMs: number;
}

/** The outside world the gate needs, injected. */
export interface StabilityProbe {
  /** The file's size and mtime, or null when it does not exist (or is not a regular file). */
  stat: (path: string) => FileStamp | null | Promise<FileStamp | null>;
  /** A monotonic clock in ms (`performance.now` in production, a counter in tests). */
  now: () => number;
  /** Waits `ms`; may resolve early when the watcher is stopping. */
  sleep: (ms: number) => Promise<void>;
  /** Polled before and after every sleep; true means give up (the watcher is stopping). */
  stopped?: () => boolean;
}

export interface StabilityOptions {
  /** How long size and mtime must stay the same, ms, >= 0. Default 2000. */
  stableMs?: number;
  /** Interval between polls, ms, > 0. Default a quarter of `stableMs`, at least 10. */
  pollMs?: number;
}

/** Normalised gate options. */
export interface StabilitySettings {
  readonly stableMs: number;
  readonly pollMs: number;
}

export type Readiness =
  | { readonly kind: 'ready'; readonly stamp: FileStamp; readonly polls: number; readonly waitedMs: number }
  | { readonly kind: 'vanished'; readonly polls: number }
  | { readonly kind: 'stopped'; readonly polls: number };

/**
 * Default quiet period, ms: the default `awaitWriteFinish.stabilityThreshold` of chokidar
 * (chokidar 5 README, "awaitWriteFinish").
 */
export const DEFAULT_STABLE_MS = 2000;

/**
 * Validates and fills in gate options once.
 * @throws RangeError "`stableMs` must be a finite number >= 0, got -1"; likewise `pollMs` > 0.
 */
export function stabilitySettings(options: StabilityOptions = {}): StabilitySettings {
  const stableMs = options.stableMs ?? DEFAULT_STABLE_MS;
  if (typeof stableMs !== 'number' || !Number.isFinite(stableMs) || stableMs < 0) {
    throw new RangeError(`\`stableMs\` must be a finite number >= 0, got ${String(stableMs)}`);
  }
  const pollMs = options.pollMs ?? Math.max(10, Math.round(stableMs / 4));
  if (typeof pollMs !== 'number' || !Number.isFinite(pollMs) || pollMs <= 0) {
    throw new RangeError(`\`pollMs\` must be a finite number > 0, got ${String(pollMs)}`);
  }
  return Object.freeze({ stableMs, pollMs });
}

/** Same size and same mtime. */
export function sameStamp(a: FileStamp, b: FileStamp): boolean {
  return a.size === b.size && a.mtimeMs === b.mtimeMs;
}

/**
 * Quiet-period write detection: polls `stat` every `pollMs` and declares the file ready when
 * the same (size, mtime) has been seen by at least two polls spanning at least `stableMs`.
 * Any change restarts the window, so a file that keeps growing is never read early.
 *
 * Both size and mtime are compared, not size alone (as chokidar's `awaitWriteFinish` does):
 * a copy that preallocates the full size, or a same-size overwrite, still moves the mtime.
 * The two-poll rule means that even with `stableMs = 0` the file is seen unchanged twice.
 * No absolute mtime-versus-clock test is made: clocks of network shares drift from ours.
 * A writer that stalls longer than `stableMs` mid-copy cannot be told from a finished one;
 * the content hash and parser downstream catch a truncated file (common practice, no source).
 *
 * @param path the file, passed to `probe.stat` unchanged.
 * @param probe injected stat, monotonic clock (ms) and sleep.
 * @param options `stableMs` >= 0 ms (default 2000), `pollMs` > 0 ms.
 * @returns `ready` with the stamp seen, `vanished` if the file is gone at any poll (a no-op for
 *   the caller), `stopped` if `probe.stopped()` turned true.
 * @throws RangeError for bad options; whatever `probe.stat` throws (e.g. EACCES) propagates.
 * @see chokidar 5 README, "awaitWriteFinish" (the quiet-period idea and its 2000 ms default).
 * @example
 * // a file unchanged from t = 0: polls at 0, 500, 1000, 1500, 2000 ms -> ready at 2000 ms
 */
export async function waitUntilStable(
  path: string,
  probe: StabilityProbe,
  options: StabilityOptions | StabilitySettings = {},
): Promise<Readiness> {
  const { stableMs, pollMs } = stabilitySettings(options);
  const stopped = probe.stopped ?? (() => false);
  const started = probe.now();
  let polls = 0;
  if (stopped()) return { kind: 'stopped', polls };
  let last = await probe.stat(path);
  polls += 1;
  if (last === null) return { kind: 'vanished', polls };
  // Time the current stamp was first seen. Ready is only decided inside the loop, after a later
  // poll matched, so every verdict rests on at least two polls.
  let since = probe.now();
  for (;;) {
    if (stopped()) return { kind: 'stopped', polls };
    await probe.sleep(pollMs);
    if (stopped()) return { kind: 'stopped', polls };
    const current = await probe.stat(path);
    polls += 1;
    if (current === null) return { kind: 'vanished', polls };
    const at = probe.now();
    if (sameStamp(current, last)) {
      if (at - since >= stableMs) {
        return {
          kind: 'ready',
          stamp: { size: current.size, mtimeMs: current.mtimeMs },
          polls,
          waitedMs: at - started,
        };
      }
    } else {
      last = current;
      since = at;
    }
  }
}
