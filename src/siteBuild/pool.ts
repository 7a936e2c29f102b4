/**
 * Builds several sites' outputs at once on worker threads. Each worker opens its own workspace on
 * the parent's paths (configuration, store, outbox) and builds the sites it is handed one at a
 * time (src/siteBuild/worker.ts) with the parent's clock reading; sites are handed out as workers
 * come free, the largest (most pens) first, so one large site does not start last. The parent
 * returns the builds in the sites' order, tells `onSite` as each site is handed out, and writes
 * the index page after the builds. A site's files are what the in-process build writes: the
 * build is the same function (`buildSite`), each site under its own lock, and the store's writes
 * are short transactions that wait for each other (the store's busy timeout).
 */
import fs from 'node:fs';
import os from 'node:os';
import { fileURLToPath } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { Site } from '../config/types.js';
import {
  type FailedBuild,
  finishOutputs,
  OutputError,
  type RegenerateOptions,
  regenerateOutputs,
  type SiteBuild,
  sitesNamed,
} from '../outputs.js';
import type { Workspace } from '../workspace.js';
import { type BuildWorkerData, crossedError, type FromBuildWorker, type ToBuildWorker } from './protocol.js';

export interface PoolOptions extends RegenerateOptions {
  /**
   * How many sites are built at once (default: one per available core). 1 builds in this
   * thread, as regenerateOutputs does; so does a build of one site (no worker start-up).
   */
  jobs?: number;
}

/** The workers a build of `sites` sites uses: `jobs` (default: the cores available), at most one per site. */
export function workersFor(sites: number, jobs: number = os.availableParallelism()): number {
  if (!Number.isInteger(jobs) || jobs < 1) throw new RangeError(`jobs must be an integer of at least 1, got ${jobs}`);
  return Math.max(1, Math.min(sites, jobs));
}

/** The order sites are handed out: most pens first (configuration order among equals). */
export function handOutOrder(sites: readonly Site[]): number[] {
  const pens = sites.map((site) => site.barns.reduce((sum, barn) => sum + barn.pens.length, 0));
  return sites.map((_, index) => index).sort((a, b) => pens[b]! - pens[a]! || a - b);
}

/** Starts a worker: the compiled module beside this one, or the TypeScript source through tsx. */
function startWorker(data: BuildWorkerData): Worker {
  const compiled = new URL('./worker.js', import.meta.url);
  if (fs.existsSync(fileURLToPath(compiled))) return new Worker(compiled, { workerData: data });
  const entry = new URL('./worker.ts', import.meta.url).href;
  return new Worker(new URL('./tsxBoot.mjs', import.meta.url), { workerData: { ...data, entry } });
}

/**
 * Regenerates the outputs of the named sites (all when none are named), as regenerateOutputs does,
 * with several sites built at once on worker threads.
 * @throws OutputError when a site's outputs cannot be written (the others are still written), or
 *   when a worker stops (the workers are ended; the sites not built are named)
 */
export async function regenerateOutputsInParallel(
  ws: Workspace,
  siteIds?: readonly string[],
  options: PoolOptions = {},
): Promise<SiteBuild[]> {
  const sites = sitesNamed(ws, siteIds);
  const workers = workersFor(sites.length, options.jobs);
  if (workers === 1) return regenerateOutputs(ws, siteIds, options);
  const { builds, failed } = await buildOnWorkers(ws, sites, workers, options);
  finishOutputs(ws, failed);
  return builds;
}

/** The sites built on `count` workers: the builds in site order, and the sites that failed. */
function buildOnWorkers(
  ws: Workspace,
  sites: readonly Site[],
  count: number,
  options: PoolOptions,
): Promise<{ builds: SiteBuild[]; failed: FailedBuild[] }> {
  const data: BuildWorkerData = {
    paths: { configDir: ws.configDir, dbFile: ws.dbFile, inbox: ws.inbox, outbox: ws.outbox },
    configDigest: ws.configDigest,
    options: {
      ...(options.full === undefined ? {} : { full: options.full }),
      ...(options.budget === undefined ? {} : { budget: options.budget }),
    },
  };
  const order = handOutOrder(sites);
  const results: (SiteBuild | { error: unknown } | undefined)[] = sites.map(() => undefined);
  const pool: Worker[] = [];
  // Workers told to stop (nothing left to hand out): their exit is the expected end.
  const stopped = new Set<Worker>();
  let handed = 0;
  return new Promise((resolve, reject) => {
    let over = false;
    const stopAll = (error: unknown) => {
      if (over) return;
      over = true;
      for (const worker of pool) void worker.terminate();
      const unbuilt = sites.filter((_, index) => results[index] === undefined).map((site) => site.id);
      reject(new OutputError(unbuilt, error));
    };
    const handOut = (worker: Worker) => {
      const index = order[handed];
      if (index === undefined) {
        stopped.add(worker);
        worker.postMessage({ type: 'stop' } satisfies ToBuildWorker);
        return;
      }
      handed++;
      const site = sites[index]!;
      options.onSite?.(site, handed, sites.length);
      worker.postMessage({
        type: 'build',
        index,
        siteId: site.id,
        now: ws.now().toISOString(),
      } satisfies ToBuildWorker);
    };
    const finish = () => {
      if (over) return;
      over = true;
      const builds: SiteBuild[] = [];
      const failed: FailedBuild[] = [];
      results.forEach((result, index) => {
        if (result !== undefined && 'error' in result) failed.push({ siteId: sites[index]!.id, error: result.error });
        else if (result !== undefined) builds.push(result);
      });
      resolve({ builds, failed });
    };
    let exited = 0;
    for (let started = 0; started < count; started++) {
      const worker = startWorker(data);
      pool.push(worker);
      worker.on('message', (message: FromBuildWorker) => {
        if (message.type === 'log') {
          ws.log(message.line);
          return;
        }
        results[message.index] = message.type === 'built' ? message.build : { error: crossedError(message.error) };
        handOut(worker);
      });
      worker.on('error', stopAll);
      worker.on('exit', (code) => {
        exited++;
        if (!stopped.has(worker))
          stopAll(new Error(`a site-build worker stopped (exit code ${code}) before its sites were built`));
        else if (exited === pool.length) finish();
      });
      handOut(worker);
    }
  });
}
