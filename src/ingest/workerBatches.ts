/**
 * The main thread's side of the parse worker: the same batches as mappedBatches(), read and
 * mapped on a second core while this thread stores the previous ones. The worker is started as
 * soon as a file is known to be large, so that it loads its modules while this thread hashes the
 * file; it reads once it is told what the file is. Each batch is acknowledged when the consumer
 * asks for the next, i.e. once it is stored.
 */
import { Worker } from 'node:worker_threads';
import { decodeBatch } from './batchWire.js';
import type { MappedBatch, MappingInput } from './mappedBatches.js';
import { failureAsError, type FromWorker, type ToWorker } from './workerProtocol.js';

const WORKER_ENTRY = new URL('./parseWorkerBoot.mjs', import.meta.url);

export class ParseWorker {
  private readonly worker = new Worker(WORKER_ENTRY);
  private readonly inbox: FromWorker[] = [];
  private crash: Error | undefined;
  private wake: (() => void) | undefined;
  private started = false;

  constructor() {
    const notify = () => {
      this.wake?.();
      this.wake = undefined;
    };
    this.worker.on('message', (message: FromWorker) => {
      this.inbox.push(message);
      notify();
    });
    this.worker.on('error', (error) => {
      this.crash ??= error;
      notify();
    });
    this.worker.on('exit', (code) => {
      this.crash ??= new Error(`parse worker stopped (exit code ${code}) before the file was read`);
      notify();
    });
  }

  /** Reads and maps one file (a worker reads one file only). */
  async *batches(input: MappingInput): AsyncGenerator<MappedBatch> {
    if (this.started) throw new Error('a parse worker reads one file only');
    this.started = true;
    this.send({ type: 'start', input });
    for (;;) {
      while (this.inbox.length === 0 && this.crash === undefined)
        await new Promise<void>((resolve) => (this.wake = resolve));
      const message = this.inbox.shift();
      if (message === undefined) throw this.crash!;
      if (message.type === 'done') return;
      if (message.type === 'failed') throw failureAsError(message.failure);
      yield decodeBatch(message.batch);
      this.send({ type: 'taken' });
    }
  }

  async stop(): Promise<void> {
    this.worker.removeAllListeners();
    this.worker.on('error', () => {});
    await this.worker.terminate();
  }

  private send(message: ToWorker): void {
    this.worker.postMessage(message);
  }
}
