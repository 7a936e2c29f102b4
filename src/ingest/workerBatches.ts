/**
 * The main thread's side of the parse worker: the same batches as mappedBatches(), read and
 * mapped on a second core while this thread stores the previous ones. Each batch is
 * acknowledged when the consumer asks for the next, i.e. once it is stored.
 */
import { Worker } from 'node:worker_threads';
import { decodeBatch } from './batchWire.js';
import type { MappedBatch, MappingInput } from './mappedBatches.js';
import { failureAsError, type FromWorker } from './workerProtocol.js';

const WORKER_ENTRY = new URL('./parseWorkerBoot.mjs', import.meta.url);

export async function* workerBatches(input: MappingInput): AsyncGenerator<MappedBatch> {
  const worker = new Worker(WORKER_ENTRY, { workerData: input });
  const inbox: FromWorker[] = [];
  let crash: Error | undefined;
  let wake: (() => void) | undefined;
  const notify = () => {
    wake?.();
    wake = undefined;
  };
  worker.on('message', (message: FromWorker) => {
    inbox.push(message);
    notify();
  });
  worker.on('error', (error) => {
    crash ??= error;
    notify();
  });
  worker.on('exit', (code) => {
    crash ??= new Error(`parse worker stopped (exit code ${code}) before the file was read`);
    notify();
  });
  try {
    for (;;) {
      while (inbox.length === 0 && crash === undefined) await new Promise<void>((resolve) => (wake = resolve));
      const message = inbox.shift();
      if (message === undefined) throw crash!;
      if (message.type === 'done') return;
      if (message.type === 'failed') throw failureAsError(message.failure);
      yield decodeBatch(message.batch);
      worker.postMessage('taken');
    }
  } finally {
    worker.removeAllListeners();
    await worker.terminate();
  }
}
