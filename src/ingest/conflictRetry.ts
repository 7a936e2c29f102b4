/**
 * Storing a file again when another process stored rows it met first: the store threw
 * StoreConflictError after rolling the file back (nothing of it stored), so the file is read and
 * stored afresh, locking the sites the failed attempts touched (beginFile's `lockSites`), up to
 * STORE_ATTEMPTS attempts. A store that serialises its writers (SQLite) never throws it.
 */
import { StoreConflictError } from '../domain/store.js';

/** Attempts at storing one file. */
export const STORE_ATTEMPTS = 3;

/**
 * Runs `attempt` (its number from 1, and the sites to lock) until it returns, or throws anything
 * but StoreConflictError, or the attempts are spent; `reset` runs before each attempt after the first.
 */
export async function withConflictRetry<T>(
  attempt: (n: number, lockSites: readonly string[]) => Promise<T>,
  reset: () => void,
): Promise<T> {
  let lockSites: string[] = [];
  for (let n = 1; ; n++) {
    try {
      return await attempt(n, lockSites);
    } catch (error) {
      if (!(error instanceof StoreConflictError) || n >= STORE_ATTEMPTS) throw error;
      reset();
      lockSites = [...new Set([...lockSites, ...error.sites])].sort();
    }
  }
}
