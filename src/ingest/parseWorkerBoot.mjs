// Entry of the parse worker thread. In the compiled program (dist/) the worker's module is the
// parseWorker.js beside this file. From the TypeScript sources a worker does not inherit the main
// thread's module hooks, so TypeScript support is registered here before the worker's module loads.
import { existsSync } from 'node:fs';

const compiled = new URL('./parseWorker.js', import.meta.url);
if (existsSync(compiled)) {
  await import(compiled.href);
} else {
  const { register } = await import('tsx/esm/api');
  register();
  await import('./parseWorker.ts');
}
