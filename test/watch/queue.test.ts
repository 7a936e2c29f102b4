import { describe, expect, it } from 'vitest';
import { createSerialQueue } from '../../src/watch/queue.js';

function deferred(): { promise: Promise<void>; resolve: () => void } {
  let resolve!: () => void;
  const promise = new Promise<void>((r) => (resolve = r));
  return { promise, resolve };
}

// Expected orders below are hand-derived from the FIFO definition (Knuth 1997, TAOCP 1, 2.2.1).
describe('createSerialQueue', () => {
  it('runs jobs one at a time in the order offered', async () => {
    const events: string[] = [];
    let active = 0;
    let maxActive = 0;
    const queue = createSerialQueue(async (key) => {
      active += 1;
      maxActive = Math.max(maxActive, active);
      events.push(`start ${key}`);
      await new Promise((r) => setTimeout(r, 5));
      events.push(`end ${key}`);
      active -= 1;
    });
    for (const key of ['a', 'b', 'c']) queue.offer(key);
    await queue.idle();
    expect(maxActive).toBe(1);
    expect(events).toEqual(['start a', 'end a', 'start b', 'end b', 'start c', 'end c']);
  });

  it('does not queue a key twice while it is queued or running, and takes it again after it settled', async () => {
    const gate = deferred();
    const runs: string[] = [];
    const queue = createSerialQueue(async (key) => {
      runs.push(key);
      if (runs.length === 1) await gate.promise;
    });
    expect(queue.offer('a')).toBe(true);
    expect(queue.offer('a')).toBe(false); // queued
    expect(queue.offer('b')).toBe(true);
    await Promise.resolve();
    await Promise.resolve();
    expect(queue.isRunning('a')).toBe(true);
    expect(queue.offer('a')).toBe(false); // running
    expect(queue.offer('b')).toBe(false); // queued
    gate.resolve();
    await queue.idle();
    expect(runs).toEqual(['a', 'b']);
    expect(queue.offer('a')).toBe(true); // settled: a re-drop may be new content
    await queue.idle();
    expect(runs).toEqual(['a', 'b', 'a']);
  });

  it('reports a failing job through onError and carries on with the next key', async () => {
    const errors: [string, string][] = [];
    const done: string[] = [];
    const queue = createSerialQueue(
      async (key) => {
        if (key === 'bad') throw new Error('parse failed');
        done.push(key);
      },
      { onError: (error, key) => errors.push([key, (error as Error).message]) },
    );
    queue.offer('bad');
    queue.offer('good');
    await queue.idle();
    expect(errors).toEqual([['bad', 'parse failed']]);
    expect(done).toEqual(['good']);
  });

  it('on stop finishes the running job, drops the waiting keys and refuses new ones', async () => {
    const gate = deferred();
    const runs: string[] = [];
    const queue = createSerialQueue(async (key) => {
      runs.push(`start ${key}`);
      await gate.promise;
      runs.push(`end ${key}`);
    });
    queue.offer('a');
    queue.offer('b');
    queue.offer('c');
    await new Promise((r) => setTimeout(r, 0));
    let stopped = false;
    const stopping = queue.stop().then((dropped) => {
      stopped = true;
      return dropped;
    });
    await new Promise((r) => setTimeout(r, 5));
    expect(stopped).toBe(false); // still waiting for 'a'
    gate.resolve();
    expect(await stopping).toEqual(['b', 'c']);
    expect(runs).toEqual(['start a', 'end a']);
    expect(queue.offer('d')).toBe(false);
  });

  it('lets onSettled offer the same key again', async () => {
    let runs = 0;
    const queue = createSerialQueue(
      async () => {
        runs += 1;
      },
      { onSettled: (key) => (runs < 2 ? void queue.offer(key) : undefined) },
    );
    queue.offer('a');
    await new Promise((r) => setTimeout(r, 10));
    await queue.idle();
    expect(runs).toBe(2);
  });
});
