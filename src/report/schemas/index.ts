/**
 * Every JSON output's schema, by its version tag: the zod definitions in this folder, written as
 * JSON Schema (draft 2020-12, `z.toJSONSchema`) into the repository's schemas/ folder by
 * `npm run schemas` (scripts/schemas.ts). A file's version tag names its schema file:
 * `ropewatch.round-summary/2` is schemas/round-summary.v2.schema.json. Receipts and the lines of
 * alerts.jsonl carry no tag; their schemas are named by the file's place (README, Outputs).
 */
import { z } from 'zod';
import { alertFeedLine, ALERT_FEED_LINE_SCHEMA, alertRecord, siteAlerts } from './alerts.js';
import { clusters } from './clusters.js';
import { nextRound } from './nextRound.js';
import { receipt, RECEIPT_SCHEMA } from './receipt.js';
import { roundSummary } from './roundSummary.js';
import { siteDigest } from './siteDigest.js';
import {
  TIDY_EXPORT_SCHEMA,
  TIDY_TABLE_SCHEMAS,
  tidyAlertsDocument,
  tidyExportDocument,
  tidyResultsDocument,
  tidyRoundsDocument,
} from './tidySchemas.js';

export interface OutputSchema {
  /** The version tag (`ropewatch.<name>/<version>`). */
  tag: string;
  /** What it describes, for the schema's `description`. */
  describes: string;
  schema: z.ZodType;
}

const tagOf = (schema: z.ZodObject): string => {
  const tag = schema.shape.schema;
  if (!(tag instanceof z.ZodLiteral)) throw new Error('a tagged output schema has a literal `schema` field');
  return String(tag.value);
};

export const OUTPUT_SCHEMAS: readonly OutputSchema[] = [
  {
    tag: tagOf(roundSummary),
    describes: 'outbox/<site>/<round>/summary.json: one round of a site',
    schema: roundSummary,
  },
  {
    tag: tagOf(clusters),
    describes: "outbox/<site>/<round>/clusters.json: a round's spatial review",
    schema: clusters,
  },
  {
    tag: tagOf(nextRound),
    describes: "outbox/<site>/next-round.json: the next round's rope list and plan",
    schema: nextRound,
  },
  {
    tag: tagOf(siteAlerts),
    describes: "outbox/<site>/alerts.json: the site's alerts as its outputs show them",
    schema: siteAlerts,
  },
  { tag: tagOf(alertRecord), describes: 'one alert of outbox/<site>/alerts.json', schema: alertRecord },
  {
    tag: tagOf(siteDigest),
    describes: "outbox/<site>/site.json: the site's digest for the index page",
    schema: siteDigest,
  },
  { tag: ALERT_FEED_LINE_SCHEMA, describes: 'one line of outbox/alerts.jsonl (JSON Lines)', schema: alertFeedLine },
  {
    tag: RECEIPT_SCHEMA,
    describes: 'outbox/receipts/<file>.<hash>.receipt.json: what ingest did with a file',
    schema: receipt,
  },
  {
    tag: TIDY_TABLE_SCHEMAS.results,
    describes: 'results.json of `ropewatch export --format json`',
    schema: tidyResultsDocument,
  },
  {
    tag: TIDY_TABLE_SCHEMAS.rounds,
    describes: 'rounds.json of `ropewatch export --format json`',
    schema: tidyRoundsDocument,
  },
  {
    tag: TIDY_TABLE_SCHEMAS.alerts,
    describes: 'alerts.json of `ropewatch export --format json`',
    schema: tidyAlertsDocument,
  },
  {
    tag: TIDY_EXPORT_SCHEMA,
    describes: '`ropewatch export --format json` on standard output: the three tables',
    schema: tidyExportDocument,
  },
];

/** `ropewatch.round-summary/1` -> `round-summary.v1.schema.json`. */
export function schemaFileName(tag: string): string {
  const match = /^ropewatch\.([a-z0-9-]+)\/(\d+)$/.exec(tag);
  if (!match) throw new RangeError(`\`tag\` must read ropewatch.<name>/<version>, got ${JSON.stringify(tag)}`);
  return `${match[1]}.v${match[2]}.schema.json`;
}

/** The JSON Schema document of one output, as shipped in schemas/. */
export function jsonSchemaText(entry: OutputSchema): string {
  const generated = z.toJSONSchema(entry.schema, { target: 'draft-2020-12' }) as Record<string, unknown>;
  const { $schema, ...rest } = generated;
  const document = {
    $schema,
    $id: `urn:ropewatch:schema:${schemaFileName(entry.tag).replace('.schema.json', '')}`,
    title: entry.tag,
    description: `${entry.describes}. Generated from the zod definitions in src/report/schemas by \`npm run schemas\`; do not edit.`,
    ...rest,
  };
  return `${JSON.stringify(document, null, 2)}\n`;
}
