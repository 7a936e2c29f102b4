/**
 * A second writer for the race tests (writer.test.ts): ingests one file into a PostgreSQL store
 * and holds the file's transaction open for a while before its commit (it prints "holding" when
 * every row is written), then prints the receipt as JSON.
 */
import fs from 'node:fs';
import { loadConfig } from '../../../src/config/load.js';
import type { StoreBackend } from '../../../src/domain/store.js';
import { ingestFile } from '../../../src/ingest/ingestFile.js';
import { openPgStore } from '../../../src/store/pg/store.js';

const [url, configDir, file, holdMs, now] = process.argv.slice(2) as [string, string, string, string, string];
const store = openPgStore(url);
const holding = new Proxy(store, {
  get(target, key, receiver) {
    if (key === 'commit')
      return () => {
        fs.writeSync(1, 'holding\n');
        Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, Number(holdMs));
        target.commit();
      };
    const value = Reflect.get(target, key, receiver);
    return typeof value === 'function' ? value.bind(target) : value;
  },
}) as StoreBackend;
try {
  const receipt = await ingestFile(file, { config: loadConfig(configDir), store: holding, now: () => new Date(now) });
  fs.writeSync(1, `${JSON.stringify(receipt)}\n`);
} finally {
  store.close();
}
