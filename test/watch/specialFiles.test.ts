/**
 * The watcher and entries that are not regular files: a FIFO (mkfifo(1)) present at start-up, a
 * Unix-domain socket (net.Server.listen(path)) appearing later. Opening a FIFO for reading blocks
 * until a writer comes (fifo(7)), so neither may reach `onFile`; each is logged once as skipped,
 * and a regular file dropped beside them is still processed.
 */
import { execFileSync } from 'node:child_process';
import { mkdtempSync, promises as fsp, rmSync } from 'node:fs';
import net from 'node:net';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { watchInbox } from '../../src/watch/watchInbox.js';

let root: string;
let inbox: string;
const servers: net.Server[] = [];

beforeEach(async () => {
  root = mkdtempSync(path.join(tmpdir(), 'ropewatch-watch-special-'));
  inbox = path.join(root, 'inbox');
  await fsp.mkdir(inbox);
});
afterEach(async () => {
  await Promise.all(servers.splice(0).map((server) => new Promise((resolve) => server.close(resolve))));
  rmSync(root, { recursive: true, force: true });
});

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));
async function waitFor(condition: () => boolean, label: string, timeoutMs = 10_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!condition()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}`);
    await sleep(10);
  }
}

describe('watchInbox and special files', () => {
  it('skips a FIFO present at start and a socket made later with one log line each, and still reads a regular file', async () => {
    execFileSync('mkfifo', [path.join(inbox, 'pipe.csv')]);
    const lines: string[] = [];
    const calls: string[] = [];
    const errors: unknown[] = [];
    let stop!: () => void;
    const done = watchInbox({
      inbox,
      stableMs: 100,
      stop: new Promise<void>((r) => (stop = r)),
      onFile: async (file) => {
        calls.push(file);
      },
      onError: (error) => errors.push(error),
      log: (line) => lines.push(line),
    });
    try {
      await waitFor(() => lines.some((line) => line.startsWith('skip pipe.csv')), 'the FIFO to be skipped');
      const server = net.createServer();
      servers.push(server);
      await new Promise<void>((resolve) => server.listen(path.join(inbox, 'socket.csv'), resolve));
      await fsp.writeFile(path.join(inbox, 'real.csv'), 'sample,ct\nR1,30\n');
      await waitFor(
        () => calls.length === 1 && lines.some((line) => line.startsWith('skip socket.csv')),
        'the regular file and the socket',
      );
      await sleep(300);
    } finally {
      stop();
      await done;
    }
    expect(calls).toEqual([path.join(inbox, 'real.csv')]);
    expect(errors).toEqual([]);
    expect(lines.filter((line) => line.startsWith('skip pipe.csv'))).toEqual([
      'skip pipe.csv: not a regular file but a FIFO (named pipe); not read',
    ]);
    expect(lines.filter((line) => line.startsWith('skip socket.csv'))).toEqual([
      'skip socket.csv: not a regular file but a socket; not read',
    ]);
  });
});
