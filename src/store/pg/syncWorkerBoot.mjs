// Entry of the PostgreSQL connection's worker thread. In the compiled program (dist/) the worker's
// module is the syncWorker.js beside this file. From the TypeScript sources a worker does not
// inherit the main thread's module hooks, so TypeScript support is registered here before the
// worker's module loads (as src/ingest/parseWorkerBoot.mjs does for the parse worker).
import { existsSync } from 'node:fs';

const compiled = new URL('./syncWorker.js', import.meta.url);
if (existsSync(compiled)) {
  await import(compiled.href);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import('./syncWorker.ts');
}
