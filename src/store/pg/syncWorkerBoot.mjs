// Entry of the PostgreSQL connection's worker thread. In the compiled program (dist/) the worker's
// module is the syncWorker.js beside this file. From the TypeScript sources a worker does not
// inherit the main thread's module hooks, so TypeScript support is registered here before the
// worker's module loads (as src/ingest/parseWorkerBoot.mjs does for the parse worker). The caller
// is blocked waiting for a reply: a module that fails to load answers with its error, so the
// caller hears of it at once instead of at its timeout.
import { existsSync } from 'node:fs';
import { workerData } from 'node:worker_threads';

const compiled = new URL('./syncWorker.js', import.meta.url);
try {
  if (existsSync(compiled)) {
    await import(compiled.href);
  } else {
    const { register } = await import('tsx/esm/api');
    register();
    await import('./syncWorker.ts');
  }
} catch (error) {
  workerData.replies.postMessage({
    ok: false,
    error: { code: 'connection', message: `the PostgreSQL connection's worker did not start: ${error?.message ?? error}` },
  });
  // Counted as replyWait.ts's countReply does (this file loads before any TypeScript can).
  const repliesPosted = new Int32Array(workerData.repliesPosted);
  Atomics.add(repliesPosted, 0, 1);
  Atomics.notify(repliesPosted, 0);
}
