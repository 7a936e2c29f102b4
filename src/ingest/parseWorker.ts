/**
 * Worker thread: reads, decodes and maps one file (mappedBatches) and posts its batches to the
 * main thread, which stores them. At most a few batches are in flight: the worker waits for the
 * store to take one before it posts more, so memory stays bounded whatever the file's size.
 */
import { parentPort, workerData } from 'node:worker_threads';
import type { Config } from '../config/types.js';
import { encodeBatch, transferables } from './batchWire.js';
import { mappedBatches, type MappingInput } from './mappedBatches.js';
import { plannedIdChecker } from './plannedIds.js';
import { describeWorkerFailure, BATCHES_IN_FLIGHT, type FromWorker } from './workerProtocol.js';

const port = parentPort!;
const input = workerData as MappingInput;
let credits = BATCHES_IN_FLIGHT;
let wake: (() => void) | undefined;
port.on('message', (message: 'taken') => {
  if (message !== 'taken') return;
  credits++;
  wake?.();
  wake = undefined;
});

const post = (message: FromWorker, transfer: ArrayBuffer[] = []) => port.postMessage(message, transfer);

try {
  // The planned-ID check needs only the sites' codes, which travel with the input.
  const check = plannedIdChecker({ sites: input.sites } as Config);
  for await (const batch of mappedBatches(input, check)) {
    while (credits === 0) await new Promise<void>((resolve) => (wake = resolve));
    credits--;
    const wire = encodeBatch(batch);
    post({ type: 'batch', batch: wire }, transferables(wire));
  }
  post({ type: 'done' });
} catch (error) {
  post({ type: 'failed', failure: describeWorkerFailure(error) });
}
