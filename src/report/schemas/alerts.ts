/** The alerts' JSON: outbox/<site>/alerts.json (a site's alerts now) and the lines of outbox/alerts.jsonl. */
import { z } from 'zod';
import type { FeedLine } from '../../alerts/feed.js';
import { ALERT_RECORD_SCHEMA, type AlertRecord, SITE_ALERTS_SCHEMA } from '../../alerts/records.js';
import type { AlertKind } from '../html/alerts.js';
import { alertNumbers, count, fits, isoDate, isoTimestamp, roundRef, sameType, siteRef } from './common.js';

export const ALERT_KINDS = [
  'first-positive',
  'new-positive-barn',
  'positive-again',
  'significant-cluster',
  'spread',
  'new-focus',
  'freedom-reset',
  'call-differs',
  'invalid',
  'suspect',
  'mistyped-id',
  'missing-ropes',
  'late-round',
  'overdue',
] as const;
export const alertKind = z.enum(ALERT_KINDS);
sameType<z.infer<typeof alertKind>, AlertKind>(true);

export const alertRecord = z.object({
  schema: z.literal(ALERT_RECORD_SCHEMA),
  key: z.string(),
  site: siteRef,
  round: roundRef,
  awaitingResults: z.boolean(),
  assay: z.string().nullable(),
  barn: z.string().nullable(),
  kind: alertKind,
  action: z.string(),
  detail: z.string(),
  message: z.string(),
  numbers: alertNumbers,
});

export const siteAlerts = z.object({
  schema: z.literal(SITE_ALERTS_SCHEMA),
  site: z.string(),
  alerts: z.array(alertRecord),
});

/** A line of outbox/alerts.jsonl (no version tag: the lines predate it; `action` and `detail` absent in the oldest). */
export const ALERT_FEED_LINE_SCHEMA = 'ropewatch.alert-feed-line/1';
export const alertFeedLine = z.object({
  key: z.string(),
  site: z.string(),
  siteName: z.string(),
  round: count,
  roundId: z.string(),
  roundStart: isoDate,
  roundEnd: isoDate,
  assay: z.string().nullable(),
  barn: z.string().nullable(),
  kind: z.string(),
  action: z.string().optional(),
  detail: z.string().optional(),
  message: z.string(),
  numbers: alertNumbers,
  seenAt: isoTimestamp,
});

fits<AlertRecord, z.input<typeof alertRecord>>(true);
fits<FeedLine, z.input<typeof alertFeedLine>>(true);
