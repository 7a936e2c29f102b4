/** Messages between the parent and the site-build workers (src/siteBuild/pool.ts), and how errors cross over. */
import type { BuildOptions, SiteBuild } from '../outputs.js';
import type { WorkspacePaths } from '../workspacePaths.js';

/** What a worker is started with: the workspace to open and the options every site is built with. */
export interface BuildWorkerData {
  paths: WorkspacePaths;
  /** The parent's configuration digest: a worker that loads another configuration refuses to build. */
  configDigest: string;
  /** Only `full` and `budget` cross over (the progress callback stays with the parent). */
  options: Pick<BuildOptions, 'full' | 'budget'>;
  /** The module the TypeScript boot loads (only when running from the sources). */
  entry?: string;
}

/** Parent to worker: build a site with the parent's clock reading, or close the workspace and end. */
export type ToBuildWorker = { type: 'build'; index: number; siteId: string; now: string } | { type: 'stop' };

/** An error as it crosses a thread: its name, message, stack and its own primitive fields (a code, a file). */
export interface CrossedError {
  name: string;
  message: string;
  stack: string | undefined;
  fields: Record<string, string | number | boolean | null>;
}

/** Worker to parent: a site's build, a site's failure (the worker goes on), or a log line. */
export type FromBuildWorker =
  | { type: 'built'; index: number; build: SiteBuild }
  | { type: 'failed'; index: number; error: CrossedError }
  | { type: 'log'; line: string };

export function crossError(error: unknown): CrossedError {
  if (!(error instanceof Error)) return { name: 'Error', message: String(error), stack: undefined, fields: {} };
  const fields: CrossedError['fields'] = {};
  for (const [key, value] of Object.entries(error)) {
    if (value === null || ['string', 'number', 'boolean'].includes(typeof value))
      fields[key] = value as string | number | boolean | null;
  }
  return { name: error.name, message: error.message, stack: error.stack, fields };
}

/**
 * The worker's error on this side: an Error with the same name, message, stack and primitive
 * fields (its class stays behind: a LockHeldError arrives as an Error named LockHeldError).
 */
export function crossedError(crossed: CrossedError): Error {
  const error = new Error(crossed.message);
  Object.assign(error, crossed.fields);
  Object.defineProperty(error, 'name', { value: crossed.name, configurable: true, writable: true });
  if (crossed.stack !== undefined) error.stack = crossed.stack;
  return error;
}
