/**
 * A site-build worker thread: opens its own workspace on the parent's paths (its own store
 * connection), then builds the sites it is handed one at a time, each with the parent's clock
 * reading, and posts each build or failure back. Started by src/siteBuild/pool.ts.
 */
import { parentPort, workerData } from 'node:worker_threads';
import { buildSite } from '../outputs.js';
import { openWorkspace } from '../workspace.js';
import { type BuildWorkerData, crossError, type FromBuildWorker, type ToBuildWorker } from './protocol.js';

const data = workerData as BuildWorkerData;
const port = parentPort;
if (port === null) throw new Error('the site-build worker runs on a worker thread only');
const post = (message: FromBuildWorker) => port.postMessage(message);

// The parent's clock reading for the site being built (each 'build' message carries it).
let now: Date | undefined;
const ws = openWorkspace(
  data.paths,
  () => {
    if (now === undefined) throw new Error('the site-build worker read the clock before it was handed a site');
    return now;
  },
  (line) => post({ type: 'log', line }),
);
if (ws.configDigest !== data.configDigest) {
  ws.close();
  throw new Error(`the configuration in ${data.paths.configDir} changed while the outputs were being built`);
}

port.on('message', (message: ToBuildWorker) => {
  if (message.type === 'stop') {
    ws.close();
    port.close();
    return;
  }
  now = new Date(message.now);
  const site = ws.config.sites.find((candidate) => candidate.id === message.siteId);
  try {
    if (site === undefined) throw new Error(`site ${message.siteId} is not in the configuration`);
    post({ type: 'built', index: message.index, build: buildSite(ws, site, data.options) });
  } catch (error) {
    post({ type: 'failed', index: message.index, error: crossError(error) });
  }
});
