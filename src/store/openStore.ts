/**
 * The one place a store is opened from its location: a SQLite file (store.ts) or a PostgreSQL
 * database (pg/store.ts). Everything past this sees a `StoreBackend` only.
 */
import type { StoreBackend } from '../domain/store.js';
import type { StoreLocation } from './location.js';
import type { StoreOptions } from './open.js';
import { openPgStore } from './pg/store.js';
import { Store } from './store.js';

/**
 * Opens (or, unless `create` is false, creates) the store at `location` and brings its schema up
 * to date.
 * @throws StoreOpenError naming the store (never a password) when it cannot be opened.
 */
export function openStore(location: StoreLocation, options: StoreOptions = {}): StoreBackend {
  if (location.kind === 'sqlite') return new Store(location.file, options);
  return openPgStore(location.url, options);
}
