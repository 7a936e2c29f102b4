import { mkdtempSync, promises as fsp, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { watchInbox, type WatchInboxOptions } from '../../src/watch/watchInbox.js';

// Real temp folders and real chokidar. A short quiet period keeps the suite fast; every wait is
// a bounded poll on an observable condition, never a bare sleep that hopes the work is done.
const STABLE_MS = 150;

let root: string;
let inbox: string;

beforeEach(() => {
  root = mkdtempSync(path.join(tmpdir(), 'ropewatch-watch-'));
  inbox = path.join(root, 'inbox');
  return fsp.mkdir(inbox);
});
afterEach(() => {
  rmSync(root, { recursive: true, force: true });
});

const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

async function waitFor(condition: () => boolean, label: string, timeoutMs = 5000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  while (!condition()) {
    if (Date.now() > deadline) throw new Error(`timed out waiting for ${label}`);
    await sleep(10);
  }
}

interface Harness {
  calls: string[];
  errors: [unknown, string | undefined][];
  lines: string[];
  /** Resolves once chokidar is ready and the start-up sweep has run. */
  started: Promise<void>;
  stop: () => void;
  done: Promise<void>;
}

function start(overrides: Partial<WatchInboxOptions> = {}): Harness {
  const calls: string[] = [];
  const errors: [unknown, string | undefined][] = [];
  const lines: string[] = [];
  let stop!: () => void;
  const stopPromise = new Promise<void>((r) => (stop = r));
  let markStarted!: () => void;
  const started = new Promise<void>((r) => (markStarted = r));
  const done = watchInbox({
    inbox,
    stableMs: STABLE_MS,
    stop: stopPromise,
    onFile: async (p) => {
      calls.push(p);
    },
    onError: (error, p) => errors.push([error, p]),
    ...overrides,
    log: (line) => {
      lines.push(line);
      if (line.startsWith('watching ')) markStarted();
      overrides.log?.(line);
    },
  });
  return { calls, errors, lines, started, stop, done };
}

describe('watchInbox', () => {
  it('sweeps a file that was already in the inbox at start-up', async () => {
    const file = path.join(inbox, 'present.csv');
    await fsp.writeFile(file, 'sample,ct\nR1,31.2\n');
    const h = start();
    await waitFor(() => h.calls.length === 1, 'the swept file');
    h.stop();
    await h.done;
    expect(h.calls).toEqual([file]);
    expect(h.errors).toEqual([]);
  });

  it('does not read a file still being written: the callback sees the final size', async () => {
    // Chunks every 40 ms for about 1 s; the quiet period (250 ms) is six times the gap between
    // writes, so only a finished file can look quiet.
    const file = path.join(inbox, 'slow.csv');
    const sizes: number[] = [];
    const h = start({
      stableMs: 250,
      onFile: async (p) => {
        sizes.push(statSync(p).size);
      },
    });
    await h.started;
    const chunk = 'R1,30.1,positive\n'.repeat(20);
    const handle = await fsp.open(file, 'a');
    for (let i = 0; i < 25; i++) {
      await handle.appendFile(chunk);
      await sleep(40);
    }
    await handle.close();
    const finalSize = chunk.length * 25;
    await waitFor(() => sizes.length >= 1, 'the written file');
    await sleep(400);
    h.stop();
    await h.done;
    expect(sizes).toEqual([finalSize]);
  });

  it('processes a file renamed into the inbox exactly once', async () => {
    const staging = path.join(root, 'staging');
    await fsp.mkdir(staging);
    const h = start();
    await h.started;
    await fsp.writeFile(path.join(staging, 'moved.csv'), 'sample,ct\nR2,undetermined\n');
    await fsp.rename(path.join(staging, 'moved.csv'), path.join(inbox, 'moved.csv'));
    await waitFor(() => h.calls.length >= 1, 'the renamed file');
    await sleep(3 * STABLE_MS);
    h.stop();
    await h.done;
    expect(h.calls).toEqual([path.join(inbox, 'moved.csv')]);
  });

  it('processes each of 200 files dropped at once exactly once, one at a time', async () => {
    let active = 0;
    let maxActive = 0;
    const seen = new Map<string, number>();
    const h = start({
      onFile: async (p) => {
        active += 1;
        maxActive = Math.max(maxActive, active);
        seen.set(p, (seen.get(p) ?? 0) + 1);
        await sleep(0);
        active -= 1;
      },
    });
    await h.started;
    const names = Array.from({ length: 200 }, (_, i) => `burst-${String(i).padStart(3, '0')}.csv`);
    await Promise.all(names.map((n, i) => fsp.writeFile(path.join(inbox, n), `sample,ct\nR${i},32.0\n`)));
    await waitFor(() => seen.size === 200, 'all 200 files', 10_000);
    await sleep(3 * STABLE_MS);
    h.stop();
    await h.done;
    expect([...seen.keys()].sort()).toEqual(names.map((n) => path.join(inbox, n)));
    expect([...seen.values()].every((count) => count === 1)).toBe(true);
    expect(maxActive).toBe(1);
    expect(h.errors).toEqual([]);
  });

  it('ignores hidden, temporary, lock, backup and foreign files, at start-up and later', async () => {
    const junk = ['.hidden.csv', 'a.csv.part', 'b.tmp', '~$c.csv', 'd.csv.swp', 'e.csv~', 'f.crdownload', 'notes.pdf'];
    await fsp.mkdir(path.join(inbox, 'archive'));
    await fsp.mkdir(path.join(inbox, 'rejected'));
    await fsp.writeFile(path.join(inbox, 'archive', 'old.csv'), 'x\n');
    for (const n of junk.slice(0, 4)) await fsp.writeFile(path.join(inbox, n), 'x\n');
    const h = start();
    await h.started;
    for (const n of junk.slice(4)) await fsp.writeFile(path.join(inbox, n), 'x\n');
    await fsp.writeFile(path.join(inbox, 'rejected', 'bad.csv'), 'x\n');
    await fsp.writeFile(path.join(inbox, 'good.csv'), 'sample,ct\n');
    await waitFor(() => h.calls.length >= 1, 'the one real export');
    await sleep(3 * STABLE_MS);
    h.stop();
    await h.done;
    expect(h.calls).toEqual([path.join(inbox, 'good.csv')]);
  });

  it('on stop finishes the current file, leaves the queued ones in the inbox, then resolves', async () => {
    const order: string[] = [];
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    const h = start({
      onFile: async (p) => {
        order.push(`start ${path.basename(p)}`);
        await held;
        order.push(`end ${path.basename(p)}`);
      },
    });
    await h.started;
    for (const n of ['r1.csv', 'r2.csv', 'r3.csv']) await fsp.writeFile(path.join(inbox, n), 'sample,ct\n');
    await waitFor(() => order.length === 1, 'the first file to start');
    // Let the other two pass their gate and wait in the queue behind the held one.
    await sleep(3 * STABLE_MS);
    h.stop();
    void h.done.then(() => order.push('resolved'));
    await sleep(50);
    expect(order).toHaveLength(1); // still inside the current file
    release();
    await h.done;
    expect(order).toEqual([order[0], order[0]!.replace('start', 'end'), 'resolved']);
    expect(h.lines).toContain('stop: 2 file(s) left in the inbox for the next start');
    expect((await fsp.readdir(inbox)).sort()).toEqual(['r1.csv', 'r2.csv', 'r3.csv']);
  });

  it('reports an error thrown by onFile through onError and carries on', async () => {
    const done: string[] = [];
    const h = start({
      onFile: async (p) => {
        if (p.endsWith('broken.csv')) throw new Error('ragged row at line 3');
        done.push(p);
      },
    });
    await h.started;
    await fsp.writeFile(path.join(inbox, 'broken.csv'), 'a,b\n1\n');
    await waitFor(() => h.errors.length === 1, 'the reported error');
    await fsp.writeFile(path.join(inbox, 'fine.csv'), 'sample,ct\n');
    await waitFor(() => done.length === 1, 'the next file');
    h.stop();
    await h.done;
    const [error, p] = h.errors[0]!;
    expect((error as Error).message).toBe('ragged row at line 3');
    expect(p).toBe(path.join(inbox, 'broken.csv'));
    expect(done).toEqual([path.join(inbox, 'fine.csv')]);
  });

  it('takes the same name again once it has been processed (a re-drop)', async () => {
    const file = path.join(inbox, 'again.csv');
    const h = start();
    await h.started;
    await fsp.writeFile(file, 'sample,ct\nR1,30\n');
    await waitFor(() => h.calls.length === 1, 'the first drop');
    await fsp.writeFile(file, 'sample,ct\nR1,30\nR2,33\n');
    await waitFor(() => h.calls.length === 2, 'the re-drop');
    h.stop();
    await h.done;
    expect(h.calls).toEqual([file, file]);
  });

  it('sends a file changed while it waited in the queue back through the gate and reads it once, complete', async () => {
    const reads: [string, string][] = [];
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    const h = start({
      onFile: async (p) => {
        reads.push([path.basename(p), await fsp.readFile(p, 'utf8')]);
        if (reads.length === 1) await held;
      },
    });
    await h.started;
    await fsp.writeFile(path.join(inbox, 'first.csv'), 'one\n');
    await waitFor(() => reads.length === 1, 'the held file');
    await fsp.writeFile(path.join(inbox, 'second.csv'), 'draft\n');
    await sleep(3 * STABLE_MS); // second.csv passes its gate and waits in the queue
    await fsp.appendFile(path.join(inbox, 'second.csv'), 'final\n');
    release();
    await waitFor(() => reads.length === 2, 'the changed file');
    await sleep(3 * STABLE_MS);
    h.stop();
    await h.done;
    expect(reads).toEqual([
      ['first.csv', 'one\n'],
      ['second.csv', 'draft\nfinal\n'],
    ]);
    expect(h.lines).toContain('wait second.csv: changed while queued');
  });

  it('reads a file again when it changed while onFile was reading it', async () => {
    const file = path.join(inbox, 'live.csv');
    const reads: string[] = [];
    let release!: () => void;
    const held = new Promise<void>((r) => (release = r));
    const h = start({
      onFile: async (p) => {
        reads.push(await fsp.readFile(p, 'utf8'));
        if (reads.length === 1) await held;
      },
    });
    await h.started;
    await fsp.writeFile(file, 'a\n');
    await waitFor(() => reads.length === 1, 'the first read');
    await fsp.appendFile(file, 'b\n');
    await sleep(100); // let chokidar report the change while onFile still runs
    release();
    await waitFor(() => reads.length === 2, 'the second read');
    await sleep(3 * STABLE_MS);
    h.stop();
    await h.done;
    expect(reads).toEqual(['a\n', 'a\nb\n']);
  });

  it('works with polling, as for a network share', async () => {
    const h = start({ poll: true, pollIntervalMs: 50 });
    await h.started;
    await fsp.writeFile(path.join(inbox, 'share.csv'), 'sample,ct\n');
    await waitFor(() => h.calls.length === 1, 'the polled file');
    h.stop();
    await h.done;
    expect(h.calls).toEqual([path.join(inbox, 'share.csv')]);
  });

  it('rejects an inbox that does not exist and a negative quiet period', async () => {
    const never = new Promise<void>(() => {});
    const noop = async (): Promise<void> => {};
    await expect(watchInbox({ inbox: path.join(root, 'missing'), onFile: noop, stop: never })).rejects.toThrow(
      /cannot be watched/,
    );
    await expect(watchInbox({ inbox, onFile: noop, stop: never, stableMs: -1 })).rejects.toThrow(RangeError);
  });
});
