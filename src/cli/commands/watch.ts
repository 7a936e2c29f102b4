/**
 * `ropewatch watch`: process each file as it arrives in the inbox, one at a time, and reload the
 * configuration when its files change, until stopped.
 */
import fs from 'node:fs';
import type { Command } from 'commander';
import { terminalText } from '../../util/terminalText.js';
import type { Workspace } from '../../workspace.js';
import { commandModules, messageOf } from '../command.js';
import type * as CommandModules from '../commandModules.js';
import { addCommonOptions, type CommonOptions } from '../commonOptions.js';
import { UsageError, type CliIo } from '../io.js';
import { stampLines } from '../stampLines.js';

type WatchOptions = CommonOptions & { poll?: boolean; stableMs: string };
type Modules = typeof CommandModules;

function parseStableMs(raw: string): number {
  const stableMs = Number(raw);
  if (!Number.isFinite(stableMs) || stableMs < 0)
    throw new UsageError(`--stable-ms must be a number of milliseconds >= 0, got ${JSON.stringify(raw)}`);
  return stableMs;
}

/**
 * One thing at a time on the workspace: a dropped file, or a reload of the configuration (with
 * the retry of refused files it brings). `settled` waits for whatever is in hand.
 */
function serialQueue() {
  let last: Promise<unknown> = Promise.resolve();
  return {
    inTurn<T>(task: () => Promise<T>): Promise<T> {
      const run = last.then(task);
      last = run.catch(() => undefined);
      return run;
    },
    settled: () => last,
  };
}

/** Watches the configuration folder: a change reloads it, in turn with the files. */
function startConfigWatch(
  ws: Workspace,
  log: CliIo,
  poll: boolean,
  queue: ReturnType<typeof serialQueue>,
  { reloadConfiguration, watchConfig }: Modules,
) {
  return watchConfig({
    dir: ws.configDir,
    poll,
    onChange: () => {
      void queue
        .inTurn(() => reloadConfiguration(ws, log))
        .catch((error: unknown) =>
          log.stderr(`ropewatch: reloading the configuration failed: ${terminalText(messageOf(error))}\n`),
        );
    },
    onError: (error) =>
      log.stderr(`ropewatch: the configuration folder cannot be watched: ${terminalText(messageOf(error))}\n`),
  });
}

/** Catches up, then watches the inbox and the configuration until the stop signal. */
async function watchWorkspace(
  ws: Workspace,
  log: CliIo,
  io: CliIo,
  options: { poll: boolean; stableMs: number },
  modules: Modules,
): Promise<void> {
  const { catchUp, deliverOwedAlerts, processAndTell, watchInbox } = modules;
  fs.mkdirSync(ws.inbox, { recursive: true });
  catchUp(ws, log);
  await deliverOwedAlerts(ws, log);
  log.stdout(`watching ${ws.inbox} (stop with Ctrl-C)\n`);
  const queue = serialQueue();
  const configWatch = startConfigWatch(ws, log, options.poll, queue, modules);
  await configWatch.ready;
  let stopped = false;
  void io.stopSignal?.then(() => {
    stopped = true;
  });
  const take = async (file: string): Promise<void> => {
    let busy = false;
    await queue.inTurn(async () => {
      busy = (await processAndTell(ws, file, log, false)) === 'busy';
      await deliverOwedAlerts(ws, log);
    });
    // Another writer held the store past the busy timeout: nothing was stored, and the file will
    // not change again to wake the watcher, so it takes its turn once more (each try waits the
    // busy timeout first).
    if (busy && !stopped) await take(file);
  };
  try {
    await watchInbox({
      inbox: ws.inbox,
      poll: options.poll,
      stableMs: options.stableMs,
      stop: (io.stopSignal ?? new Promise<void>(() => {})).then(() => undefined),
      // watchInbox logs file names as found in the folder; the watcher itself says "stopped".
      log: (line) => log.stdout(`${terminalText(line)}\n`),
      onError: (error, file) =>
        log.stderr(`ropewatch: ${terminalText(`${file ? `${file}: ` : ''}${messageOf(error)}`)}\n`),
      // A file still being written is read again when it settles (the watcher saw it change).
      onFile: take,
    });
  } finally {
    await configWatch.close();
    await queue.settled();
  }
}

export function registerWatch(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('watch')
      .description(
        'watch the inbox and process each file as it arrives, one at a time, until stopped (SIGINT/SIGTERM); ' +
          'reloads the configuration when its files change and then tries refused files again',
      )
      .option('--poll', 'poll the folder instead of file-system events (network shares)')
      .option('--stable-ms <ms>', 'quiet time before a file counts as completely written', '2000'),
  ).action(async (options: WatchOptions) => {
    const stableMs = parseStableMs(options.stableMs);
    const modules = await commandModules();
    modules.checkInbox(io, options);
    // A watch runs for days and its output is a log: every line it writes begins with the time
    // (ISO 8601, UTC, from the injected clock).
    const log = stampLines(io);
    await modules.withWorkspace(log, options, (ws) =>
      watchWorkspace(ws, log, io, { poll: options.poll === true, stableMs }, modules),
    );
  });
}
