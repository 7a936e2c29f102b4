/**
 * Where the store lives, told from the text of `--db` (or `ROPEWATCH_DB`): a `postgres://` or
 * `postgresql://` URL is a PostgreSQL database, anything else the path of a SQLite file.
 *
 * Credentials for PostgreSQL may sit in the URL, in the usual PG* environment variables
 * (PGUSER, PGPASSWORD, PGHOST, PGPORT, PGDATABASE) or in a password file (~/.pgpass, or the one
 * PGPASSFILE names): node-postgres reads those itself when the URL leaves them out. Anything
 * shown to a person goes through `redactedLocation`, which never shows a password.
 */
import { STORE_LOCATION_ENV, type StoreLocation } from '../workspacePaths.js';

export { STORE_LOCATION_ENV, type StoreLocation } from '../workspacePaths.js';

const POSTGRES_SCHEME = /^postgres(?:ql)?:\/\//i;
const HIDDEN = '***';

/** A store location that cannot be used as written (a PostgreSQL URL that does not parse). */
export class StoreLocationError extends Error {
  override readonly name = 'StoreLocationError';
  readonly code = 'store-location';
  constructor(
    readonly location: string,
    detail: string,
  ) {
    super(`store ${redactedLocation(location)}: ${detail}`);
  }
}

/** True when the text names a PostgreSQL database rather than a SQLite file. */
export function isPostgresLocation(text: string): boolean {
  return POSTGRES_SCHEME.test(text);
}

/**
 * Tells a PostgreSQL URL from a SQLite file path.
 * @throws StoreLocationError when a `postgres://` URL does not parse, or names no host and no
 *   socket folder.
 */
export function parseStoreLocation(text: string): StoreLocation {
  if (!isPostgresLocation(text)) return { kind: 'sqlite', file: text };
  let url: URL;
  try {
    url = new URL(text);
  } catch {
    throw new StoreLocationError(text, 'is not a valid PostgreSQL URL (postgres://user@host:port/database)');
  }
  if (url.hostname === '' && !url.searchParams.has('host') && url.pathname.length <= 1) {
    throw new StoreLocationError(text, 'names neither a host nor a database (postgres://user@host:port/database)');
  }
  return { kind: 'postgres', url: text };
}

/**
 * The location from `--db` when given, else from ROPEWATCH_DB, else the default SQLite file.
 * @throws StoreLocationError as parseStoreLocation.
 */
export function storeLocationFrom(
  option: string | undefined,
  env: Readonly<Record<string, string | undefined>>,
  defaultFile: string,
): StoreLocation {
  const fromEnv = env[STORE_LOCATION_ENV];
  return parseStoreLocation(option ?? (fromEnv !== undefined && fromEnv !== '' ? fromEnv : defaultFile));
}

/**
 * The location as it may be shown: a PostgreSQL URL with its password (in the user part or as a
 * `password` parameter) replaced by `***`; a SQLite path as it is. A URL that does not parse
 * keeps only its scheme and what follows the last `@`.
 */
export function redactedLocation(text: string): string {
  if (!isPostgresLocation(text)) return text;
  let url: URL;
  try {
    url = new URL(text);
  } catch {
    const at = text.lastIndexOf('@');
    const scheme = POSTGRES_SCHEME.exec(text)?.[0] ?? '';
    return at < 0 ? `${scheme}${HIDDEN}` : `${scheme}${HIDDEN}@${text.slice(at + 1)}`;
  }
  if (url.password !== '') url.password = HIDDEN;
  for (const key of [...url.searchParams.keys()]) {
    if (key.toLowerCase() === 'password') url.searchParams.set(key, HIDDEN);
  }
  return url.toString();
}

/** A location as it may be shown: the SQLite file, or the PostgreSQL URL without its password. */
export function shownLocation(location: StoreLocation): string {
  return location.kind === 'sqlite' ? location.file : redactedLocation(location.url);
}
