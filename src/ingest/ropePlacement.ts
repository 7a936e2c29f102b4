/**
 * Where a rope may hang, decided from what the store already holds. Pure: the store looks up the
 * facts (where a sample hangs, which sample holds a pen that day) and applies the decision.
 *
 * - One rope per pen per day: a second sample in a pen on a day it already holds one is refused
 *   (`pen-twice-same-day`); two sample IDs for one rope are the lab's or the farm's to settle
 *   (common practice, no source).
 * - A sample hangs in one place: the same sample ID in another pen or on another day is refused
 *   (`sample-id-reused`); the same place again is the same rope.
 * - A sample that already hangs somewhere (a rope sheet says where) keeps that place when its ID
 *   encodes another: the sheet records what was hung, the encoded location only what the label
 *   was printed for, so the result is placed where the rope hangs, with a warning.
 * - A pool gets an ID of its own: a pool ID that names a rope, or a rope ID that names a pool of
 *   earlier ropes, is refused (`bad-pool`).
 */
import type { ResultRow, RopeRow } from '../domain/records.js';
import type { RowRejection } from '../domain/rejections.js';
import { rowRejection } from './errors.js';
import type { EncodedRopeStep, PoolFacts, RopeConflict, RopeConflictFacts, SampleRopeState } from '../domain/store.js';

/** Store the row: the answer for nearly every row, one object for all of them. */
const STORE: EncodedRopeStep = Object.freeze({ kind: 'store' });

/**
 * The step for a result row whose sample ID encodes `location`. A sample's other assays carry
 * the same location: it is tried once per file, and its outcome repeated for them.
 */
export function encodedRopeStep(sample: SampleRopeState, row: ResultRow, location: string): EncodedRopeStep {
  if (sample.ropedAt === location) return STORE;
  if (sample.patternTriedAt === location) {
    if (sample.patternRefusal === undefined) return STORE;
    return { kind: 'refuse', rejection: { ...sample.patternRefusal, line: row.line } };
  }
  if (sample.ropedAt !== undefined) {
    return {
      kind: 'store-elsewhere',
      warning: `line ${row.line}: sample ${row.sampleId} hangs in ${sample.ropedAt} by an earlier rope; its ID names ${location}: the result is placed where the rope hangs`,
    };
  }
  return { kind: 'place' };
}

/** A refused encoded rope names the file's sample ID column: that is the cell that carries the location. */
export function encodedRopeRefusal(refusal: RowRejection, sampleIdField: string, sampleId: string): RowRejection {
  return { ...refusal, field: sampleIdField, value: sampleId };
}

/** Why a rope did not go in, from where its sample hangs and who holds the pen that day. */
export function ropeConflict(row: RopeRow, source: 'sheet' | 'sample-pattern', found: RopeConflictFacts): RopeConflict {
  const { existing } = found;
  if (existing) {
    const same =
      existing.siteId === row.siteId &&
      existing.barnId === row.barnId &&
      existing.penId === row.penId &&
      existing.hungOn === row.hungOn;
    if (same) return { kind: 'already-hung' };
    return {
      kind: 'refused',
      rejection: rowRejection({
        code: 'sample-id-reused',
        line: row.line,
        field: 'sample_id',
        value: row.sampleId,
        detail: `sample ${row.sampleId} already hung in ${existing.siteId}/${existing.barnId}/${existing.penId} on ${existing.hungOn}`,
      }),
    };
  }
  const other = found.clashSampleId ?? '(another sample)';
  return {
    kind: 'refused',
    rejection: rowRejection({
      code: 'pen-twice-same-day',
      line: row.line,
      field: 'pen',
      value: row.penId,
      detail:
        source === 'sheet'
          ? `pen ${row.barnId}/${row.penId} already has sample ${other} on ${row.hungOn}; one rope per pen per day (hang a retest on another day or correct the sheet)`
          : `sample ${row.sampleId} names pen ${row.barnId}/${row.penId} on ${row.hungOn}, which already has sample ${other}; one rope per pen per day, so two sample IDs name one rope: the result is not stored (ask the lab which ID the tube carries)`,
    }),
  };
}

/** A refusal of a rope-sheet row for its pool, or undefined when the pool (or its absence) is fine. */
export function poolRefusal(row: RopeRow, facts: PoolFacts): RowRejection | undefined {
  const poolId = row.poolId ?? null;
  if (poolId === null) {
    // A rope tested on its own whose ID already names a pool: one tube cannot be both.
    if (!facts.sampleNamesPool) return undefined;
    return rowRejection({
      code: 'bad-pool',
      line: row.line,
      field: 'sample_id',
      value: row.sampleId,
      detail: `sample ${row.sampleId} is the ID of a pool of earlier ropes, so it cannot name a rope`,
    });
  }
  if (facts.poolRopedAt === undefined) return undefined;
  return rowRejection({
    code: 'bad-pool',
    line: row.line,
    field: 'pool',
    value: poolId,
    detail: `pool ID ${poolId} names the rope hung in ${facts.poolRopedAt}; a pool gets an ID of its own`,
  });
}
