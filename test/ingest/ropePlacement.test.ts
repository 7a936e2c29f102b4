/**
 * Where a rope may hang, decided without a store. One rope per pen per day, one place per sample
 * ID, a pool with an ID of its own, and a rope sheet's location over a label's encoded one are
 * common practice, no source. Expected outcomes are by hand from the facts given.
 */
import { describe, expect, it } from 'vitest';
import type { ResultRow, RopeRow } from '../../src/domain/records.js';
import { encodedRopeRefusal, encodedRopeStep, poolRefusal, ropeConflict } from '../../src/ingest/ropePlacement.js';

const rope = (overrides: Partial<RopeRow> = {}): RopeRow => ({
  siteId: 'hof',
  barnId: 'b1',
  penId: 'p4',
  hungOn: '2026-08-01',
  line: 12,
  sampleId: 'R-17',
  note: null,
  sampleIdAsWritten: null,
  warning: undefined,
  ...overrides,
});

// Only the fields the placement rule reads; the rest of a result row does not enter it.
const result = { line: 9, sampleId: 'HOF-B1-P4-260801' } as ResultRow;
const fresh = { ropedAt: undefined, patternTriedAt: undefined, patternRefusal: undefined };
const HERE = 'hof/b1/p4/2026-08-01';

describe('encodedRopeStep', () => {
  it('places the rope of a sample that hangs nowhere yet', () => {
    expect(encodedRopeStep(fresh, result, HERE)).toEqual({ kind: 'place' });
  });

  it('stores the row when the sample hangs where its ID says', () => {
    expect(encodedRopeStep({ ...fresh, ropedAt: HERE }, result, HERE)).toEqual({ kind: 'store' });
  });

  it('stores the row where a rope sheet hung the sample, with a warning naming both places', () => {
    const step = encodedRopeStep({ ...fresh, ropedAt: 'hof/b1/p5/2026-08-01' }, result, HERE);
    expect(step.kind).toBe('store-elsewhere');
    expect(step.kind === 'store-elsewhere' && step.warning).toContain('hof/b1/p5/2026-08-01');
    expect(step.kind === 'store-elsewhere' && step.warning).toContain(HERE);
  });

  it("refuses a sample's next row alike once its location was refused, on the next row's line", () => {
    const refusal = { field: 'Sample', code: 'pen-twice-same-day' as const, value: 'X', message: 'taken' };
    const step = encodedRopeStep({ ...fresh, patternTriedAt: HERE, patternRefusal: refusal }, result, HERE);
    expect(step).toEqual({ kind: 'refuse', rejection: { ...refusal, line: 9 } });
    expect(encodedRopeStep({ ...fresh, patternTriedAt: HERE }, result, HERE)).toEqual({ kind: 'store' });
  });

  it("restates a refusal for the result row: the file's sample ID column and cell", () => {
    const refusal = { line: 9, field: 'pen', code: 'pen-twice-same-day' as const, value: 'p4', message: 'm' };
    expect(encodedRopeRefusal(refusal, 'Probe', 'HOF-B1-P4-260801')).toEqual({
      ...refusal,
      field: 'Probe',
      value: 'HOF-B1-P4-260801',
    });
  });
});

describe('ropeConflict', () => {
  it('finds the same rope again when the sample hangs in the same pen on the same day', () => {
    const existing = { siteId: 'hof', barnId: 'b1', penId: 'p4', hungOn: '2026-08-01' };
    expect(ropeConflict(rope(), 'sheet', { existing, clashSampleId: undefined })).toEqual({ kind: 'already-hung' });
  });

  it('refuses a sample ID that hangs in another pen (sample-id-reused)', () => {
    const existing = { siteId: 'hof', barnId: 'b1', penId: 'p9', hungOn: '2026-08-01' };
    const conflict = ropeConflict(rope(), 'sheet', { existing, clashSampleId: undefined });
    expect(conflict).toMatchObject({
      kind: 'refused',
      rejection: { line: 12, field: 'sample_id', code: 'sample-id-reused', value: 'R-17' },
    });
  });

  it('refuses a second rope in a pen on one day (pen-twice-same-day), naming the sample already there', () => {
    for (const source of ['sheet', 'sample-pattern'] as const) {
      const conflict = ropeConflict(rope(), source, { existing: undefined, clashSampleId: 'R-03' });
      expect(conflict).toMatchObject({
        kind: 'refused',
        rejection: { field: 'pen', code: 'pen-twice-same-day', value: 'p4' },
      });
      expect(conflict.kind === 'refused' && conflict.rejection.message).toContain('R-03');
    }
  });
});

describe('poolRefusal', () => {
  it('lets a rope without a pool in unless its ID already names a pool', () => {
    expect(poolRefusal(rope(), { sampleNamesPool: false, poolRopedAt: undefined })).toBeUndefined();
    expect(poolRefusal(rope(), { sampleNamesPool: true, poolRopedAt: undefined })).toMatchObject({
      field: 'sample_id',
      code: 'bad-pool',
      value: 'R-17',
    });
  });

  it('refuses a pool ID that names a hung rope, and lets a fresh pool ID in', () => {
    const pooled = rope({ poolId: 'POOL-1' });
    expect(poolRefusal(pooled, { sampleNamesPool: false, poolRopedAt: undefined })).toBeUndefined();
    expect(poolRefusal(pooled, { sampleNamesPool: false, poolRopedAt: HERE })).toMatchObject({
      line: 12,
      field: 'pool',
      code: 'bad-pool',
      value: 'POOL-1',
    });
  });
});
