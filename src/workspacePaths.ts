/**
 * Where a workspace keeps its parts: the default paths of the configuration folder, the store,
 * the inbox and the outbox (relative to the working directory), the files of the configuration
 * folder and the inbox's subfolders. The one table the options, the workspace and the messages
 * read; it imports nothing of ropewatch, so declaring the commands can read it too.
 */

/** The paths a command works on when --config, --db, --inbox and --outbox are not given. */
export const DEFAULT_PATHS = Object.freeze({
  config: 'config',
  db: 'data/ropewatch.db',
  inbox: 'inbox',
  outbox: 'outbox',
});

/** The files of the configuration folder: sites, assays, one lab profile per YAML file in labs/, corrections (optional). */
export const CONFIG_FILES = Object.freeze({
  sites: 'sites.yaml',
  assays: 'assays.yaml',
  labsDir: 'labs',
  corrections: 'corrections.yaml',
});

/** The inbox's subfolders: processed files move to archive/, refused ones to rejected/. */
export const INBOX_FOLDERS = Object.freeze({
  archive: 'archive',
  rejected: 'rejected',
});

/** Names ropewatch writes at the top of the outbox, beside the site folders. */
export const OUTBOX_NAMES = Object.freeze({
  receipts: 'receipts',
  indexPage: 'index.html',
});

/** How help texts and messages name a place of the default layout (`inbox/rejected/`). */
export const DEFAULT_PLACES = Object.freeze({
  config: `${DEFAULT_PATHS.config}/`,
  inbox: `${DEFAULT_PATHS.inbox}/`,
  outbox: `${DEFAULT_PATHS.outbox}/`,
  archive: `${DEFAULT_PATHS.inbox}/${INBOX_FOLDERS.archive}/`,
  rejected: `${DEFAULT_PATHS.inbox}/${INBOX_FOLDERS.rejected}/`,
  receipts: `${DEFAULT_PATHS.outbox}/${OUTBOX_NAMES.receipts}/`,
});

/** Where the store lives: a SQLite file or a PostgreSQL database (told apart in src/store/location.ts). */
export type StoreLocation =
  | { readonly kind: 'sqlite'; readonly file: string }
  | { readonly kind: 'postgres'; readonly url: string };

/** The environment variable that names the store when `--db` is not given. */
export const STORE_LOCATION_ENV = 'ROPEWATCH_DB';

export interface WorkspacePaths {
  configDir: string;
  /** Where the store lives: a SQLite file (an absolute path) or a PostgreSQL database. */
  storeLocation: StoreLocation;
  inbox: string;
  outbox: string;
}

/** --config, --db, --inbox and --outbox as given (each may be left out). */
export interface PathOptions {
  config?: string;
  db?: string;
  inbox?: string;
  outbox?: string;
}
