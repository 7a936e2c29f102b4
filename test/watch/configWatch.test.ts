/**
 * The configuration watcher: real chokidar on a temp folder. Every wait is a bounded poll on an
 * observable condition.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { watchConfig } from '../../src/watch/configWatch.js';

let dirs: string[] = [];
afterEach(() => {
  for (const dir of dirs) fs.rmSync(dir, { recursive: true, force: true });
  dirs = [];
});
const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));
async function waitFor(condition: () => boolean, label: string, timeoutMs = 5000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!condition()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}`);
    await sleep(10);
  }
}

describe('watchConfig', () => {
  it('reports a burst of writes to configuration files once, and ignores other files', async () => {
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-config-watch-'));
    dirs.push(dir);
    fs.mkdirSync(path.join(dir, 'labs'));
    fs.writeFileSync(path.join(dir, 'sites.yaml'), 'a: 1\n');
    let changes = 0;
    const watcher = watchConfig({ dir, onChange: () => changes++, quietMs: 150 });
    try {
      await watcher.ready;
      // An editor's backup and a note beside the configuration are not configuration.
      fs.writeFileSync(path.join(dir, 'sites.yaml~'), 'x');
      fs.writeFileSync(path.join(dir, 'labs', '.lab.yaml.swp'), 'x');
      fs.writeFileSync(path.join(dir, 'README.md'), 'x');
      await sleep(400);
      expect(changes).toBe(0);
      for (let i = 0; i < 5; i++) fs.writeFileSync(path.join(dir, 'sites.yaml'), `a: ${i}\n`);
      fs.writeFileSync(path.join(dir, 'labs', 'new-lab.yaml'), 'id: x\n');
      await waitFor(() => changes === 1, 'one change');
      await sleep(400);
      expect(changes).toBe(1);
    } finally {
      await watcher.close();
    }
  });
});
