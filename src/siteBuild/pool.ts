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
import { type RegenerateOptions, regenerateOutputs, siteLockFile, sitesNamed } from '../outputs.js';
import { releaseOwnPidLock } from '../util/pidLock.js';
import { type FailedBuild, finishOutputs, OutputError, type SiteBuild } from './results.js';
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

/** What a pool's build of the sites gives: the builds in site order, and the sites that failed. */
interface PoolOutcome {
  builds: SiteBuild[];
  failed: FailedBuild[];
}

/** The sites built on `count` workers (see SitePool). */
function buildOnWorkers(
  ws: Workspace,
  sites: readonly Site[],
  count: number,
  options: PoolOptions,
): Promise<PoolOutcome> {
  return new Promise((resolve, reject) => new SitePool(ws, sites, options, resolve, reject).start(count));
}

/**
 * One build of `sites` on worker threads: hands the sites out as workers come free, keeps each
 * result at its site's place, and settles once every worker has ended. A worker that fails or
 * stops early, or a failing progress callback or clock, ends every worker and rejects.
 */
class SitePool {
  private readonly order: number[];
  private readonly results: (SiteBuild | { error: unknown } | undefined)[];
  private readonly workers: Worker[] = [];
  /** Workers told to stop (nothing left to hand out): their exit is the expected end. */
  private readonly stopped = new Set<Worker>();
  private handed = 0;
  private exited = 0;
  private over = false;

  constructor(
    private readonly ws: Workspace,
    private readonly sites: readonly Site[],
    private readonly options: PoolOptions,
    private readonly resolve: (outcome: PoolOutcome) => void,
    private readonly reject: (error: unknown) => void,
  ) {
    this.order = handOutOrder(sites);
    this.results = sites.map(() => undefined);
  }

  start(count: number): void {
    const { ws, options } = this;
    const data: BuildWorkerData = {
      paths: { configDir: ws.configDir, storeLocation: ws.storeLocation, inbox: ws.inbox, outbox: ws.outbox },
      configDigest: ws.configDigest,
      options: {
        ...(options.full === undefined ? {} : { full: options.full }),
        ...(options.budget === undefined ? {} : { budget: options.budget }),
      },
    };
    try {
      for (let started = 0; started < count; started++) {
        const worker = startWorker(data);
        this.workers.push(worker);
        worker.on('message', (message: FromBuildWorker) => this.received(worker, message));
        worker.on('error', (error) => this.fail(error));
        worker.on('exit', (code) => this.ended(worker, code));
        this.handOut(worker);
      }
    } catch (error) {
      this.fail(error, { raw: true });
    }
  }

  private received(worker: Worker, message: FromBuildWorker): void {
    if (message.type === 'log') {
      this.ws.log(message.line);
      return;
    }
    this.results[message.index] = message.type === 'built' ? message.build : { error: crossedError(message.error) };
    try {
      this.handOut(worker);
    } catch (error) {
      this.fail(error, { raw: true });
    }
  }

  /** Gives `worker` the next site (telling onSite, reading the clock), or tells it to stop. */
  private handOut(worker: Worker): void {
    if (this.over) return;
    const index = this.order[this.handed];
    if (index === undefined) {
      this.stopped.add(worker);
      worker.postMessage({ type: 'stop' } satisfies ToBuildWorker);
      return;
    }
    this.handed++;
    const site = this.sites[index]!;
    this.options.onSite?.(site, this.handed, this.sites.length);
    const now = this.ws.now().toISOString();
    worker.postMessage({ type: 'build', index, siteId: site.id, now } satisfies ToBuildWorker);
  }

  private ended(worker: Worker, code: number): void {
    this.exited++;
    if (!this.stopped.has(worker))
      this.fail(new Error(`a site-build worker stopped (exit code ${code}) before its sites were built`));
    else if (this.exited === this.workers.length) this.finish();
  }

  /**
   * Ends every worker and rejects: with an OutputError naming the sites not built, or (`raw`,
   * for this thread's own callback or clock) with the error itself, as the in-process build throws it.
   */
  private fail(error: unknown, { raw = false } = {}): void {
    if (this.over) return;
    this.over = true;
    const unbuilt = this.sites.filter((_, index) => this.results[index] === undefined).map((site) => site.id);
    const inHand = this.order
      .slice(0, this.handed)
      .filter((index) => this.results[index] === undefined)
      .map((index) => this.sites[index]!.id);
    void Promise.allSettled(this.workers.map((worker) => worker.terminate())).then(() => {
      // A worker ended in the middle of a site leaves that site's output lock holding this
      // process's pid, which a later build in this process would wait on: release them.
      for (const siteId of inHand) releaseOwnPidLock(siteLockFile(this.ws.outbox, siteId));
      this.reject(raw ? error : new OutputError(unbuilt, error));
    });
  }

  private finish(): void {
    const missing = this.sites.filter((_, index) => this.results[index] === undefined);
    if (missing.length > 0) {
      this.fail(new Error('the site-build workers ended before every site was built'));
      return;
    }
    this.over = true;
    const builds: SiteBuild[] = [];
    const failed: FailedBuild[] = [];
    this.results.forEach((result, index) => {
      if (result !== undefined && 'error' in result)
        failed.push({ siteId: this.sites[index]!.id, error: result.error });
      else if (result !== undefined) builds.push(result);
    });
    this.resolve({ builds, failed });
  }
}
