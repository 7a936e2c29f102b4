/**
 * Tells when the configuration folder changes (sites.yaml, assays.yaml, corrections.yaml, labs/*.yaml), once per
 * burst of writes: an editor saving a file writes, renames and touches it in quick succession,
 * and the configuration is reloaded after the folder has been quiet for `quietMs`.
 */
import path from 'node:path';
import { watch, type FSWatcher } from 'chokidar';
import { CONFIG_FILES } from '../workspacePaths.js';

export interface ConfigWatchOptions {
  /** The configuration folder. */
  dir: string;
  /** Called once per burst of changes, after `quietMs` without another. */
  onChange: () => void;
  /** Quiet time after the last change, ms (default 500). */
  quietMs?: number;
  /** Poll instead of file-system events (network shares). */
  poll?: boolean;
  /** Failures of the watcher itself. */
  onError?: (error: unknown) => void;
}

export interface ConfigWatch {
  /** Resolves once the watcher is ready: changes after this are reported. */
  ready: Promise<void>;
  close: () => Promise<void>;
}

/** Only the files loadConfig reads count; editor swap and backup files do not. */
function isConfigFile(dir: string, file: string): boolean {
  const relative = path.relative(dir, file).split(path.sep);
  if (relative.length === 1)
    return ([CONFIG_FILES.sites, CONFIG_FILES.assays, CONFIG_FILES.corrections] as readonly string[]).includes(
      relative[0]!,
    );
  return relative.length === 2 && relative[0] === CONFIG_FILES.labsDir && /^[^.].*\.ya?ml$/i.test(relative[1]!);
}

export function watchConfig(options: ConfigWatchOptions): ConfigWatch {
  const dir = path.resolve(options.dir);
  const quietMs = options.quietMs ?? 500;
  let timer: NodeJS.Timeout | undefined;
  let closed = false;
  const changed = (file: string): void => {
    if (closed || !isConfigFile(dir, file)) return;
    clearTimeout(timer);
    timer = setTimeout(() => {
      if (!closed) options.onChange();
    }, quietMs);
  };
  const watcher: FSWatcher = watch(dir, {
    depth: 1,
    ignoreInitial: true,
    usePolling: options.poll ?? false,
    interval: 500,
    persistent: true,
  });
  for (const event of ['add', 'change', 'unlink'] as const) watcher.on(event, changed);
  watcher.on('error', (error) => options.onError?.(error));
  const ready = new Promise<void>((resolve) => watcher.once('ready', () => resolve()));
  return {
    ready,
    close: async () => {
      closed = true;
      clearTimeout(timer);
      await watcher.close();
    },
  };
}
