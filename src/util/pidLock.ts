/**
 * A lock between processes on one machine: a file holding the pid of its holder. A lock whose
 * process is gone (killed, crashed) is taken over, so a dead holder never blocks for ever.
 */
import fs from 'node:fs';
import { processIsAlive } from './processAlive.js';

/**
 * Takes the lock `file` (an exclusively created file holding the pid). Returns the function that
 * releases it, or null when a live process holds it.
 */
export function takePidLock(file: string): (() => void) | null {
  // The pid is written under a name of this process's own, then linked to the lock's name:
  // link(2) fails with EEXIST when the lock exists, so a lock is never seen without its pid.
  const mine = `${file}.${process.pid}`;
  fs.writeFileSync(mine, String(process.pid));
  try {
    for (let attempt = 0; attempt < 2; attempt++) {
      try {
        fs.linkSync(mine, file);
        return () => fs.rmSync(file, { force: true });
      } catch (error) {
        if ((error as NodeJS.ErrnoException).code !== 'EEXIST') throw error;
        let holder: number;
        try {
          holder = Number.parseInt(fs.readFileSync(file, 'utf8'), 10);
        } catch {
          continue; // released meanwhile
        }
        if (Number.isInteger(holder) && processIsAlive(holder)) return null;
        fs.rmSync(file, { force: true });
      }
    }
    return null;
  } finally {
    fs.rmSync(mine, { force: true });
  }
}

/**
 * Removes the lock `file` if this process holds it: for a thread of this process that was ended
 * while it held the lock (its own release never ran, and the pid in it is alive).
 */
export function releaseOwnPidLock(file: string): void {
  let holder: number;
  try {
    holder = Number.parseInt(fs.readFileSync(file, 'utf8'), 10);
  } catch {
    return;
  }
  if (holder === process.pid) fs.rmSync(file, { force: true });
}

/** Blocks the thread for `ms` milliseconds (the outputs are written synchronously). */
function sleepSync(ms: number): void {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

/** Thrown when a lock stays held by a live process past the wait. */
export class LockHeldError extends Error {
  override readonly name = 'LockHeldError';
  readonly code = 'lock-held';
  constructor(
    readonly file: string,
    readonly waitedMs: number,
  ) {
    super(`${file} is held by another process (waited ${Math.round(waitedMs / 1000)} s)`);
  }
}

/**
 * Waits for the lock `file`, polling, up to `timeoutMs`. Returns the function that releases it.
 * @throws LockHeldError when a live process still holds it after `timeoutMs`
 */
export function waitForPidLock(file: string, timeoutMs: number, pollMs = 25): () => void {
  const started = Date.now();
  for (;;) {
    const release = takePidLock(file);
    if (release) return release;
    const waited = Date.now() - started;
    if (waited >= timeoutMs) throw new LockHeldError(file, waited);
    sleepSync(Math.min(pollMs, timeoutMs - waited));
  }
}
