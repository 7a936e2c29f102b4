/**
 * The rules ingest stores a file's rows by, handed to the store's `beginFile`: which report
 * governs (supersession.ts) and where a rope may hang (ropePlacement.ts). Pure.
 */
import type { RowRules } from '../domain/store.js';
import { encodedRopeRefusal, encodedRopeStep, poolRefusal, ropeConflict } from './ropePlacement.js';
import { supersede } from './supersession.js';

export const ingestRules: RowRules = Object.freeze({
  supersede,
  encodedRope: encodedRopeStep,
  encodedRopeRefusal,
  ropeConflict,
  poolRefusal,
});
