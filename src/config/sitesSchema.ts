/** What sites.yaml may say: sites, their barns and layouts, the analysis settings, the rope sheet's header names. */
import { z } from 'zod';
import { programOverridesSchema, programSchema } from './programSchema.js';
import { identifier, isoDate, penRef, probability } from './schemaCommon.js';
import { herdStatusCategoriesSchema, herdStatusSchema, siteAlertsSchema } from './siteNotices.js';

export const layoutSchema = z
  .object({
    rows: z.number().int().min(1).max(4),
    pensPerRow: z.number().int().min(1).max(500),
    numbering: z.enum(['per-row', 'continuous', 'serpentine']).default('per-row'),
    rowLabels: z.array(z.string().min(1)).optional(),
    padDigits: z.number().int().min(0).max(4).default(0),
    penWidth: z.number().gt(0).default(1),
    penDepth: z.number().gt(0).default(1),
    alleyWidth: z.number().min(0).default(0.5),
    gapsAfter: z.array(z.number().int().min(1)).default([]),
    gapWidth: z.number().min(0).default(1),
    empty: z.array(penRef).default([]),
    outOfUse: z.array(penRef).default([]),
    headCount: z
      .object({
        default: z.number().int().min(0).optional(),
        pens: z.record(z.string(), z.number().int().min(0)).optional(),
      })
      .strict()
      .optional(),
  })
  .strict();
/** One group of pigs in an all-in/all-out barn: placed on a day, closed out (emptied) on a later one. */
export const groupSchema = z
  .object({
    id: identifier,
    label: z.string().min(1).optional(),
    placedOn: isoDate,
    /** Absent: the group is still in the barn. */
    closedOn: isoDate.optional(),
  })
  .strict();

export const barnSchema = z
  .object({
    id: identifier,
    name: z.string().min(1).optional(),
    /** Where the barn's first pen corner sits on the site, in pen units. */
    position: z.object({ x: z.number(), y: z.number() }).strict().default({ x: 0, y: 0 }),
    /** Age group of the pigs (nursery, grow-finish...): selects a rope sensitivity when configured. */
    ageGroup: z.string().optional(),
    layout: layoutSchema,
    /** Groups of pigs, for a barn filled and emptied as one (all-in/all-out). */
    groups: z.array(groupSchema).optional(),
  })
  .strict();

export const siteSchema = z
  .object({
    id: identifier,
    name: z.string().min(1),
    /** Short code printed in planned sample IDs: 2 to 5 letters or digits. */
    code: z.string().regex(/^[A-Z0-9]{1,4}[A-Z]$/, '2 to 5 capital letters or digits, ending in a letter'),
    program: programOverridesSchema.optional(),
    /**
     * Sample IDs that carry their own location: a regular expression with named groups
     * `barn` and `pen`, optionally `date` (yyyyMMdd).
     */
    samplePattern: z.string().optional(),
    barns: z.array(barnSchema).min(1),
    /** Where the site's alerts go besides outbox/alerts.jsonl (src/config/siteNotices.ts). */
    alerts: siteAlertsSchema.optional(),
    /** The veterinarian's status of the herd, with the day it was set. */
    herdStatus: herdStatusSchema.optional(),
  })
  .strict();

/** How ropewatch runs its Monte Carlo parts and sizes plans; the seed is written into every output. */
export const analysisSchema = z
  .object({
    seed: z.number().int().min(0).default(1),
    /** Permutations for join-count (when exact enumeration is too large), Moran and scan p-values. */
    permutations: z.number().int().min(99).max(99_999).default(999),
    /** p-value at or below which a cluster is reported as significant. */
    alpha: z.number().gt(0).lt(1).default(0.05),
    /** Simulated outbreaks per barn for spatially aware detection. */
    spreadRealisations: z.number().int().min(100).max(100_000).default(2000),
    /** Per-step transmission over a pen contact in the spread model (a modelling assumption). */
    spreadTransmission: probability.default(0.3),
    /** Per-step background infection of any pen in the spread model. */
    spreadBackground: probability.default(0.01),
    /**
     * Which detection model sizes the plan: the hypergeometric (infected pens anywhere: holds
     * whatever places infection first), or the spread model (contagious spread from a seed pen).
     */
    sizingModel: z.enum(['spatial', 'hypergeometric']).default('hypergeometric'),
  })
  .strict();

/** Header names of one rope-sheet column: one name or a list (they replace the default synonyms). */
const ropeColumnNames = z.union([z.string().min(1), z.array(z.string().min(1)).min(1)]);

/** What a rope sheet's header may call each column, besides its own name (sample_id, site, ...). */
export const ropeSheetSchema = z
  .object({
    columns: z
      .object({
        sampleId: ropeColumnNames.optional(),
        site: ropeColumnNames.optional(),
        barn: ropeColumnNames.optional(),
        pen: ropeColumnNames.optional(),
        hungOn: ropeColumnNames.optional(),
        notes: ropeColumnNames.optional(),
        pool: ropeColumnNames.optional(),
      })
      .strict()
      .optional(),
  })
  .strict();

export const sitesFileSchema = z
  .object({
    organisation: z.string().optional(),
    ropeSheet: ropeSheetSchema.optional(),
    /** The veterinarian's categories of herd status; without it a site's category is free text. */
    herdStatusCategories: herdStatusCategoriesSchema.optional(),
    analysis: analysisSchema.default({
      seed: 1,
      permutations: 999,
      alpha: 0.05,
      spreadRealisations: 2000,
      spreadTransmission: 0.3,
      spreadBackground: 0.01,
      sizingModel: 'hypergeometric',
    }),
    programDefaults: programSchema,
    sites: z.array(siteSchema).min(1),
  })
  .strict();
