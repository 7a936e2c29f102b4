/**
 * The options every workspace command declares. Kept apart from `workspaceOptions.ts` (which
 * opens the workspace, and so loads the configuration and store modules) so that declaring the
 * commands for `--help` loads nothing but commander.
 */
import type { Command } from 'commander';
import { CONFIG_FILES, DEFAULT_PATHS, type PathOptions, STORE_LOCATION_ENV } from '../workspacePaths.js';

export interface CommonOptions extends PathOptions {
  json?: boolean;
}

/** --config, --db, --inbox, --outbox: the same on every command that touches the workspace. */
export function addCommonOptions(command: Command): Command {
  return command
    .option(
      '--config <dir>',
      `configuration folder (${CONFIG_FILES.sites}, ${CONFIG_FILES.assays}, ${CONFIG_FILES.labsDir}/)`,
      DEFAULT_PATHS.config,
    )
    .option(
      '--db <store>',
      `the store: a SQLite file or a PostgreSQL database (postgres://user@host:port/database); default $${STORE_LOCATION_ENV}, else ${DEFAULT_PATHS.db}`,
    )
    .option('--inbox <dir>', 'drop folder for lab exports and rope sheets', DEFAULT_PATHS.inbox)
    .option('--outbox <dir>', 'folder for summaries, reviews and rope lists', DEFAULT_PATHS.outbox);
}
