/** outbox/<site>/site.json: the digest of a site that the index page is built from. */
import { z } from 'zod';
import { DIGEST_SCHEMA, type SiteDigest } from '../html/indexPage.js';
import { alertNumbers, count, fits, isoDate, roundRef, siteRef } from './common.js';

export const siteDigest = z.object({
  schema: z.literal(DIGEST_SCHEMA),
  site: siteRef,
  latestRound: roundRef.nullable(),
  alerts: z.array(
    z.object({
      kind: z.string(),
      assayId: z.string().nullable(),
      barnId: z.string().nullable(),
      message: z.string(),
      action: z.string().optional(),
      detail: z.string().optional(),
      numbers: alertNumbers.optional(),
      pens: z.array(z.string()).optional(),
    }),
  ),
  notices: z.array(z.string()),
  nextRound: z.object({ round: count, dueDate: isoDate, overdue: z.boolean(), daysOverdue: count }),
  links: z.object({
    summary: z.string().nullable(),
    clusters: z.string().nullable(),
    nextRound: z.string(),
    plan: z.string().optional(),
    rounds: z.array(z.object({ id: z.string(), startOn: isoDate, summary: z.string(), clusters: z.string() })),
  }),
});

fits<SiteDigest, z.input<typeof siteDigest>>(true);
