/**
 * The shape every command file under commands/ exports: it declares one command (or command
 * group) on its parent and says what runs when the command is chosen. Declaring loads nothing but
 * commander and the small modules of src/cli; what a command runs with is imported when it runs
 * (`await commandModules()`), so `--help`, `--version` and a usage error start quickly.
 */
import type { Command } from 'commander';
import type { CliIo } from './io.js';

/** Declares one command on `parent` (the program, or a command group such as `calc`). */
export type RegisterCommand = (parent: Command, io: CliIo) => void;

/** The pipeline, outputs, watcher and workspace modules, loaded when a command runs. */
export const commandModules = () => import('./commandModules.js');

/** The message of a thrown value, or the value as text when it is not an Error. */
export function messageOf(error: unknown): string {
  return (error as Error).message ?? String(error);
}
