/**
 * Worker thread: reads, decodes and maps one file (mappedBatches) and posts its batches to the
 * main thread, which stores them. At most a few batches are in flight: the worker waits for the
 * store to take one before it posts more, so memory stays bounded whatever the file's size.
 */
import { parentPort } from 'node:worker_threads';
import { revivePattern } from '../config/pattern.js';
import { encodeBatch, transferables } from './batchWire.js';
import { mappedBatches, type MappingInput } from './mappedBatches.js';
import { BATCHES_IN_FLIGHT, describeWorkerFailure, type FromWorker, type ToWorker } from './workerProtocol.js';

const port = parentPort!;
let credits = BATCHES_IN_FLIGHT;
let wake: (() => void) | undefined;

const post = (message: FromWorker, transfer: ArrayBuffer[] = []) => port.postMessage(message, transfer);

/**
 * The input as the main thread meant it: sites and the lab profile cross by structured clone,
 * which keeps a configured pattern's source but drops its compiled automaton (a class instance
 * arrives as a plain object), so the patterns are compiled again here.
 */
function withPatterns(input: MappingInput): MappingInput {
  const sites = input.sites.map((site) => ({ ...site, samplePattern: revivePattern(site.samplePattern) }));
  const { kind } = input;
  if (kind.kind !== 'results') return { ...input, sites };
  return {
    ...input,
    sites,
    kind: { ...kind, lab: { ...kind.lab, fileNamePattern: revivePattern(kind.lab.fileNamePattern) } },
  };
}

async function read(input: MappingInput): Promise<void> {
  try {
    for await (const batch of mappedBatches(withPatterns(input))) {
      // Encode before waiting: the row objects then die young instead of being promoted while
      // the batch waits for the store, which keeps this thread's heap from growing with the file.
      const wire = encodeBatch(batch);
      while (credits === 0) await new Promise<void>((resolve) => (wake = resolve));
      credits--;
      post({ type: 'batch', batch: wire }, transferables(wire));
    }
    post({ type: 'done' });
  } catch (error) {
    post({ type: 'failed', failure: describeWorkerFailure(error) });
  }
}

port.on('message', (message: ToWorker) => {
  if (message.type === 'start') {
    void read(message.input);
  } else if (message.type === 'taken') {
    credits++;
    wake?.();
    wake = undefined;
  }
});
