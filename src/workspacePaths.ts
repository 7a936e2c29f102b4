/**
 * Where a workspace keeps its parts: the default paths of the configuration folder, the store,
 * the inbox and the outbox (relative to the working directory), the files of the configuration
 * folder and the inbox's subfolders. The one table the options, the workspace and the messages
 * read; it imports nothing of ropewatch, so declaring the commands can read it too.
 */
import path from 'node:path';

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

export interface WorkspacePaths {
  configDir: string;
  dbFile: string;
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

/** The workspace's absolute paths: each option as given, or its default, resolved against `cwd`. */
export function resolvePaths(cwd: string, options: PathOptions): WorkspacePaths {
  return {
    configDir: path.resolve(cwd, options.config ?? DEFAULT_PATHS.config),
    dbFile: path.resolve(cwd, options.db ?? DEFAULT_PATHS.db),
    inbox: path.resolve(cwd, options.inbox ?? DEFAULT_PATHS.inbox),
    outbox: path.resolve(cwd, options.outbox ?? DEFAULT_PATHS.outbox),
  };
}
