/**
 * The retry of a file whose rows another writer stored first (StoreConflictError, whose contract
 * src/domain/store.ts states: nothing stored, the sites touched named). A bounded number of
 * attempts, each later one locking every site an earlier one touched: common practice, no source.
 */
import { describe, expect, it } from 'vitest';
import { StoreConflictError } from '../../src/domain/store.js';
import { STORE_ATTEMPTS, withConflictRetry, withConflictRetrySync } from '../../src/ingest/conflictRetry.js';

describe('withConflictRetry', () => {
  it('attempts again after a conflict, locking the sites every failed attempt touched, sorted', async () => {
    const seen: (readonly string[])[] = [];
    let resets = 0;
    const result = await withConflictRetry(
      async (attempt, lockSites) => {
        seen.push(lockSites);
        if (attempt === 1) throw new StoreConflictError(['site-b'], 'samples');
        if (attempt === 2) throw new StoreConflictError(['site-a', 'site-b'], 'ropes');
        return 'stored';
      },
      () => resets++,
    );
    expect(result).toBe('stored');
    expect(seen).toEqual([[], ['site-b'], ['site-a', 'site-b']]);
    expect(resets).toBe(2);
  });

  it(`gives up after ${STORE_ATTEMPTS} attempts with the last conflict, and never retries another error`, async () => {
    let attempts = 0;
    await expect(
      withConflictRetry(
        async () => {
          attempts++;
          throw new StoreConflictError([], `attempt ${attempts}`);
        },
        () => {},
      ),
    ).rejects.toThrow(`attempt ${STORE_ATTEMPTS}`);
    expect(attempts).toBe(STORE_ATTEMPTS);
    let other = 0;
    expect(() =>
      withConflictRetrySync(() => {
        other++;
        throw new RangeError('not a conflict');
      }),
    ).toThrow(RangeError);
    expect(other).toBe(1);
  });
});
