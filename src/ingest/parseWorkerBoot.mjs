// Entry of the parse worker thread: a worker does not inherit the main thread's module hooks,
// so TypeScript support is registered here before the worker's own module loads.
import { register } from 'tsx/esm/api';

register();
await import('./parseWorker.ts');
