/**
 * The one place a store is opened from its location: a SQLite file (store.ts) or a PostgreSQL
 * database (pg/store.ts). Everything past this sees a `StoreBackend` only.
 */
import type { StoreBackend } from '../domain/store.js';
import type { StoreLocation } from './location.js';
import { redactedLocation } from './location.js';
import { type StoreOptions, StoreOpenError } from './open.js';
import { Store } from './store.js';

/**
 * Opens (or, unless `create` is false, creates) the store at `location` and brings its schema up
 * to date.
 * @throws StoreOpenError naming the store (never a password) when it cannot be opened.
 */
export function openStore(location: StoreLocation, options: StoreOptions = {}): StoreBackend {
  if (location.kind === 'sqlite') return new Store(location.file, options);
  throw new StoreOpenError(redactedLocation(location.url), 'is a PostgreSQL database: not yet openable here');
}
