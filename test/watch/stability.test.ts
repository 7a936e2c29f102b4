import { describe, expect, it } from 'vitest';
import { stabilitySettings, waitUntilStable, type FileStamp, type StabilityProbe } from '../../src/watch/stability.js';

/**
 * A fake clock and a scripted file: `history(t)` gives the file as it is at time t (ms), null when
 * absent. `sleep` advances the clock; nothing really waits.
 */
function fakeProbe(
  history: (t: number) => FileStamp | null,
  stopAt = Infinity,
): StabilityProbe & { statTimes: number[] } {
  let t = 0;
  const statTimes: number[] = [];
  return {
    statTimes,
    now: () => t,
    sleep: async (ms) => {
      t += ms;
    },
    stat: (path) => {
      expect(path).toBe('/inbox/a.csv');
      statTimes.push(t);
      return history(t);
    },
    stopped: () => t >= stopAt,
  };
}

const steady: FileStamp = { size: 1200, mtimeMs: 1_700_000_000_000 };

describe('waitUntilStable', () => {
  it('declares an unchanged file ready once two polls span the quiet period', async () => {
    // Hand timeline, stableMs 2000, pollMs 500: polls at 0, 500, 1000, 1500, 2000; the stamp first
    // seen at 0 is still the same at 2000 -> ready with 5 polls after 2000 ms.
    const probe = fakeProbe(() => steady);
    const result = await waitUntilStable('/inbox/a.csv', probe, { stableMs: 2000, pollMs: 500 });
    expect(result).toEqual({ kind: 'ready', stamp: steady, polls: 5, waitedMs: 2000 });
  });

  it('uses 2000 ms and a 500 ms poll by default', () => {
    // 2000 ms is chokidar's default awaitWriteFinish.stabilityThreshold (chokidar 5 README).
    expect(stabilitySettings()).toEqual({ stableMs: 2000, pollMs: 500 });
  });

  it('does not read a growing file early: the quiet period restarts at every change', async () => {
    // The file grows by 100 bytes every 300 ms until t = 3000 ms, then stays. Polls every 100 ms;
    // the last change is first seen by the poll at t = 3000, so ready at 3000 + 1000 = 4000.
    const growing = (t: number): FileStamp => {
      const writes = Math.min(Math.floor(t / 300), 10);
      return { size: 100 * (writes + 1), mtimeMs: 1_700_000_000_000 + writes * 300 };
    };
    const probe = fakeProbe(growing);
    const result = await waitUntilStable('/inbox/a.csv', probe, { stableMs: 1000, pollMs: 100 });
    expect(result.kind).toBe('ready');
    if (result.kind !== 'ready') return;
    expect(result.stamp).toEqual({ size: 1100, mtimeMs: 1_700_000_003_000 });
    expect(result.waitedMs).toBe(4000);
  });

  it('notices a same-size rewrite through the mtime', async () => {
    // Size never changes; mtime moves at t = 400. Window restarts at the poll at 400 -> ready at 400 + 500.
    const probe = fakeProbe((t) => ({ size: 10, mtimeMs: t < 400 ? 1 : 2 }));
    const result = await waitUntilStable('/inbox/a.csv', probe, { stableMs: 500, pollMs: 100 });
    expect(result).toMatchObject({ kind: 'ready', stamp: { size: 10, mtimeMs: 2 }, waitedMs: 900 });
  });

  it('needs two polls even with a zero quiet period', async () => {
    const probe = fakeProbe(() => steady);
    const result = await waitUntilStable('/inbox/a.csv', probe, { stableMs: 0, pollMs: 50 });
    expect(result).toMatchObject({ kind: 'ready', polls: 2, waitedMs: 50 });
    expect(probe.statTimes).toEqual([0, 50]);
  });

  it('treats a file that vanished, at the first poll or later, as a no-op', async () => {
    expect(
      await waitUntilStable(
        '/inbox/a.csv',
        fakeProbe(() => null),
        { stableMs: 100, pollMs: 10 },
      ),
    ).toEqual({
      kind: 'vanished',
      polls: 1,
    });
    // Present at 0 and 10, gone from 20: third poll sees nothing.
    const later = await waitUntilStable(
      '/inbox/a.csv',
      fakeProbe((t) => (t < 20 ? steady : null)),
      {
        stableMs: 100,
        pollMs: 10,
      },
    );
    expect(later).toEqual({ kind: 'vanished', polls: 3 });
  });

  it('gives up when the watcher is stopping, even for a file that never settles', async () => {
    const probe = fakeProbe((t) => ({ size: t, mtimeMs: t }), 1000);
    const result = await waitUntilStable('/inbox/a.csv', probe, { stableMs: 200, pollMs: 100 });
    expect(result.kind).toBe('stopped');
  });

  it('lets a stat error propagate', async () => {
    const probe = fakeProbe(() => {
      throw Object.assign(new Error('EACCES: permission denied'), { code: 'EACCES' });
    });
    await expect(waitUntilStable('/inbox/a.csv', probe, { stableMs: 100 })).rejects.toThrow(/EACCES/);
  });

  it('rejects bad options with the RangeError grammar', async () => {
    expect(() => stabilitySettings({ stableMs: -1 })).toThrow(
      new RangeError('`stableMs` must be a finite number >= 0, got -1'),
    );
    expect(() => stabilitySettings({ stableMs: Number.NaN })).toThrow(RangeError);
    expect(() => stabilitySettings({ pollMs: 0 })).toThrow(
      new RangeError('`pollMs` must be a finite number > 0, got 0'),
    );
    await expect(
      waitUntilStable(
        '/inbox/a.csv',
        fakeProbe(() => steady),
        { stableMs: -5 },
      ),
    ).rejects.toThrow(RangeError);
  });
});
