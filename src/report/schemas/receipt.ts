/**
 * outbox/receipts/<file>.<hash>.receipt.json: what ingest did with one file (src/ingest/receipt.ts).
 * Receipts carry no version tag (they are written as they always were); the schema is named by
 * the file's place instead.
 */
import { z } from 'zod';
import type { ReportStatusKind } from '../../config/types.js';
import { REJECTION_CODES } from '../../ingest/errors.js';
import type { Receipt } from '../../ingest/receipt.js';
import type { SupersessionKind } from '../../domain/records.js';
import { count, fits, isoDate, isoTimestamp, resultClass, sameType } from './common.js';

export const RECEIPT_SCHEMA = 'ropewatch.receipt/1';

const rejectionCode = z.enum(Object.keys(REJECTION_CODES) as [keyof typeof REJECTION_CODES]);
const statusKind = z.enum(['preliminary', 'final', 'corrected']);
sameType<z.infer<typeof statusKind>, ReportStatusKind>(true);
const supersessionKind = z.enum([
  'correction',
  'correction-kept',
  'final-over-preliminary',
  'preliminary-after-final',
  'later-report',
  'earlier-report-kept',
  'same-date-later-file',
]);
sameType<z.infer<typeof supersessionKind>, SupersessionKind>(true);

const reading = z.object({
  resultClass,
  ctRaw: z.string(),
  labCall: z.string().nullable(),
  reportedOn: isoDate.nullable(),
  status: statusKind.nullable(),
});

export const receipt = z.object({
  file: z.string(),
  sha256: z.string().regex(/^[0-9a-f]{64}$/),
  receivedAt: isoTimestamp,
  status: z.enum(['accepted', 'rejected', 'duplicate']),
  kind: z.enum(['results', 'ropes', 'unknown']),
  lab: z.string().nullable(),
  encoding: z.string().nullable(),
  sheet: z.string().optional(),
  rows: z.object({ accepted: count, rejected: count, duplicate: count, superseded: count }),
  rejectedRows: z.array(
    z.object({
      line: count,
      // Absent when the row has no field or value to name (JSON leaves undefined out).
      field: z.string().optional(),
      code: rejectionCode,
      value: z.string().optional(),
      message: z.string(),
      suggestedId: z.string().optional(),
      candidateIds: z.array(z.string()).readonly().optional(),
    }),
  ),
  rejectedRowsNotListed: count,
  unresolvedSampleIds: z.array(z.string()),
  unresolvedNotListed: count,
  resolvedSampleIds: z.array(z.string()),
  warnings: z.array(z.string()),
  reason: z
    .object({ code: rejectionCode, message: z.string(), line: count.nullable(), field: z.string().nullable() })
    .nullable(),
  sites: z.array(z.string()),
  invalidRows: z
    .array(z.object({ line: count, sampleId: z.string(), assayId: z.string(), reason: z.string() }))
    .optional(),
  invalidRowsNotListed: count.optional(),
  callDisagreements: z
    .array(
      z.object({
        line: count,
        sampleId: z.string(),
        assayId: z.string(),
        labCall: z.string(),
        labCallClass: resultClass,
        resultClass,
        ctRaw: z.string(),
      }),
    )
    .optional(),
  callDisagreementsNotListed: count.optional(),
  supersessions: z
    .array(
      z.object({
        line: count,
        sampleId: z.string(),
        assayId: z.string(),
        labId: z.string(),
        kind: supersessionKind,
        thisFileCurrent: z.boolean(),
        replaced: reading,
        current: reading,
        reason: z.string(),
      }),
    )
    .optional(),
  supersessionsNotListed: count.optional(),
  sampleIdCorrections: z.array(z.object({ line: count, written: z.string(), meant: z.string() })).optional(),
});

fits<Receipt, z.input<typeof receipt>>(true);
