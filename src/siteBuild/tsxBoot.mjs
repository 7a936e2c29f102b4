// Entry of a site-build worker when ropewatch runs from its TypeScript sources (tests, the
// benchmark): a worker does not inherit the parent's module hooks, so TypeScript support is
// registered here before the worker's module loads. The compiled program (dist/) starts the
// compiled worker.js directly and never loads this file.
import { workerData } from 'node:worker_threads';

const { register } = await import('tsx/esm/api');
register();
await import(workerData.entry);
