/**
 * Raw configuration schemas (what the YAML may say). One schema per file kind; `load.ts`
 * validates, reports errors with the file and the key path, and normalises once.
 */
import { z } from 'zod';
import { hl7SenderSchema } from './hl7Profile.js';
import { REQUIRED_KEY_HELP } from './schemaProblems.js';
import { herdStatusCategoriesSchema, herdStatusSchema, siteAlertsSchema } from './siteNotices.js';

const probability = z.number().min(0).max(1);
const penId = z.string().min(1);
/** A pen as the layout names it, or its number unquoted (YAML reads `7` as a number): 7 is pen 07. */
const penRef = z.union([penId, z.number().int().min(0)]);
const identifier = z
  .string()
  .regex(/^[A-Za-z0-9][A-Za-z0-9_-]*$/, 'letters, digits, "-" and "_" only, starting with a letter or digit');

/** Design prevalence: a proportion of pens (0.1) or a number of pens ({ pens: 1 }). */
export const designPrevalenceSchema = z.union([
  z.number().gt(0).max(1),
  z.object({ pens: z.number().int().min(1) }).strict(),
]);

/**
 * Barn-level design value: the barns of a site assumed infected when the site is judged as a
 * whole, a proportion of the barns (0.2, rounded up to whole barns) or a number of barns
 * ({ barns: 1 }). Left out: every barn is infected at the design prevalence.
 */
export const barnDesignPrevalenceSchema = z.union([
  z.number().gt(0).max(1),
  z.object({ barns: z.number().int().min(1) }).strict(),
]);

/** Rope sensitivity per assay (and optionally per age group), with a default. */
const perAssayProbability = z.union([
  probability,
  z.object({ default: probability }).catchall(z.union([probability, z.record(z.string(), probability)])),
]);

export const programSchema = z
  .object({
    designPrevalence: designPrevalenceSchema,
    targetConfidence: z.number().gt(0).lt(1),
    ropeSensitivity: perAssayProbability,
    ropeSpecificity: perAssayProbability,
    /** Collections within this many days of a round's first rope belong to that round. */
    roundWindowDays: z.number().int().min(1).max(60),
    /** Days between rounds the program intends. */
    intervalDays: z.number().int().min(1).max(365),
    /** Probability of freedom before the first round (Martin, Cameron & Greiner 2007). */
    priorFreedom: probability,
    /** Probability of an introduction over one program interval. */
    introductionPerInterval: probability,
    /** Ropes per site per round the producer is willing to hang (optional cap). */
    ropeBudget: z.number().int().min(1).optional(),
    /** Pens around a positive cluster that get follow-up ropes: distance in pen units. */
    followUpRadius: z.number().min(0).optional(),
    /**
     * Most follow-up ropes per barn after positives; when set, the pens are chosen greedily by
     * simulated onward spread. Without it every in-use pen of the ring gets a rope.
     */
    followUpRopes: z.number().int().min(0).optional(),
    /** Size routine ropes so that each barn reaches the target, or so that the site does across barns. */
    sizeFor: z.enum(['barn', 'site']).optional(),
    /** Days after a round's last rope date within which its results are still awaited (ropes are not missing yet). */
    resultGraceDays: z.number().int().min(0).max(120).optional(),
    /** Infected barns at the site's design value (two-stage design); left out: every barn. */
    barnDesignPrevalence: barnDesignPrevalenceSchema.optional(),
    /**
     * A barn positive for a PCR assay stays positive (monitored, not surveyed) until this many
     * rounds in a row come back negative for that assay.
     */
    clearAfterNegativeRounds: z.number().int().min(1).max(52).optional(),
    /** Ropes of the fixed set that tracks spread and clearance in a positive barn (same pens every round). */
    trackingRopes: z.number().int().min(0).optional(),
    /**
     * Ropes tested together in one PCR: how many ropes of one barn the plan puts in a pool, and
     * the pool-level sensitivity and specificity (a pool's accuracy, dilution included).
     */
    pooling: z
      .object({
        poolSize: z.number().int().min(1).max(50),
        poolSensitivity: probability,
        poolSpecificity: probability.optional(),
      })
      .strict()
      .optional(),
  })
  .strict();

export const programOverridesSchema = programSchema.partial().strict();

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

/** A calendar date written yyyy-MM-dd (YAML reads an unquoted 2026-03-02 as this text). */
const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'a date written yyyy-MM-dd')
  .refine((text) => {
    const [year, month, day] = text.split('-').map(Number) as [number, number, number];
    // Gregorian leap years: divisible by 4, except centuries not divisible by 400.
    const leap = year % 4 === 0 && (year % 100 !== 0 || year % 400 === 0);
    const days = [31, leap ? 29 : 28, 31, 30, 31, 30, 31, 31, 30, 31, 30, 31][month - 1];
    return days !== undefined && day >= 1 && day <= days;
  }, 'not a day of the calendar');

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

const ctCutoffs = {
  /** Ct strictly below this is positive. */
  positiveBelow: z.number().gt(0),
  /** Ct at or above `positiveBelow` and strictly below this is suspect; at or above is negative. */
  suspectBelow: z.number().gt(0),
};

/** What an assay's numeric result is: a Ct (lower = more nucleic acid) or an ELISA S/P ratio (higher = more antibody). */
export const measureSchema = z.enum(['ct', 'sp-ratio']);

/** S/P cutoffs: at or above `positiveAtOrAbove` positive; from `suspectAtOrAbove` up to it suspect. */
const spCutoffs = {
  positiveAtOrAbove: z.number().gt(0),
  suspectAtOrAbove: z.number().gt(0),
};

/** A Ct band (`below`, lowest Ct first) or, for an S/P assay, an S/P band (`atOrAbove`, highest first). */
export const loadBandSchema = z
  .object({ name: z.string().min(1), below: z.number().gt(0).optional(), atOrAbove: z.number().optional() })
  .strict();

/** Keys that belong to one measure only: named in the refusal of the other. */
const CT_ONLY_KEYS = ['positiveBelow', 'suspectBelow', 'cycleLimit', 'sequencingBelow'] as const;
const SP_ONLY_KEYS = ['positiveAtOrAbove', 'suspectAtOrAbove', 'pairedWith'] as const;

export const assaySchema = z
  .object({
    id: identifier,
    name: z.string().min(1),
    target: z.string().min(1).optional(),
    /** `ct` (the default) or `sp-ratio` (an antibody ELISA). */
    measure: measureSchema.default('ct'),
    positiveBelow: ctCutoffs.positiveBelow.optional(),
    suspectBelow: ctCutoffs.suspectBelow.optional(),
    cycleLimit: z.number().gt(0).max(60).optional(),
    positiveAtOrAbove: spCutoffs.positiveAtOrAbove.optional(),
    suspectAtOrAbove: spCutoffs.suspectAtOrAbove.optional(),
    /** Semi-quantitative load bands: by Ct (required for a Ct assay), by S/P (optional). */
    loadBands: z.array(loadBandSchema).min(1).optional(),
    /** Ct below which the lab usually attempts sequencing or subtyping. */
    sequencingBelow: z.number().gt(0).optional(),
    /** An S/P assay: the PCR assay of the same pathogen, shown beside it per pen. */
    pairedWith: identifier.optional(),
    notifiable: z.boolean().default(false),
    /** Where the defaults come from, printed in reports. */
    source: z.string().optional(),
  })
  .strict()
  .superRefine((assay, ctx) => {
    const required =
      assay.measure === 'ct'
        ? (['positiveBelow', 'suspectBelow', 'cycleLimit', 'loadBands'] as const)
        : (['positiveAtOrAbove'] as const);
    for (const key of required) {
      if (assay[key] === undefined) {
        const help = REQUIRED_KEY_HELP[key];
        ctx.addIssue({
          code: 'custom',
          path: [key],
          message: `is missing${help === undefined ? '' : `: ${help}`} (required for an assay with measure ${assay.measure})`,
        });
      }
    }
    const foreign = assay.measure === 'ct' ? SP_ONLY_KEYS : CT_ONLY_KEYS;
    for (const key of foreign) {
      if (assay[key] !== undefined) {
        ctx.addIssue({
          code: 'custom',
          path: [key],
          message: `belongs to ${assay.measure === 'ct' ? 'an S/P assay (measure: sp-ratio)' : 'a Ct assay'}, not to one with measure ${assay.measure}`,
        });
      }
    }
    const bandKey = assay.measure === 'ct' ? 'below' : 'atOrAbove';
    (assay.loadBands ?? []).forEach((band, index) => {
      if (band[bandKey] === undefined || band[bandKey === 'below' ? 'atOrAbove' : 'below'] !== undefined) {
        ctx.addIssue({
          code: 'custom',
          path: ['loadBands', index],
          message: `a band of an assay with measure ${assay.measure} gives ${bandKey} (and only that)`,
        });
      }
    });
  });

export const assaysFileSchema = z.object({ assays: z.array(assaySchema).min(1) }).strict();

export const labAssaySchema = z
  .object({
    assay: identifier,
    positiveBelow: z.number().gt(0).optional(),
    suspectBelow: z.number().gt(0).optional(),
    cycleLimit: z.number().gt(0).max(60).optional(),
    /** For an S/P assay: this lab's validated S/P cutoffs. */
    positiveAtOrAbove: spCutoffs.positiveAtOrAbove.optional(),
    suspectAtOrAbove: spCutoffs.suspectAtOrAbove.optional(),
  })
  .strict();

export const labProfileSchema = z
  .object({
    id: identifier,
    name: z.string().min(1),
    /** Which files come from this lab: a regular expression on the file name (case-insensitive). */
    fileNamePattern: z.string().optional(),
    format: z
      .object({
        delimiter: z.enum([',', ';', '\t', '|', 'auto']).default('auto'),
        decimal: z.enum(['.', ',']).default('.'),
        encoding: z.enum(['utf-8', 'latin1', 'utf-16le', 'auto']).default('auto'),
        /** date-fns format of date cells, e.g. yyyy-MM-dd or dd.MM.yyyy. */
        dateFormat: z.string().min(1),
        /** Lines before the header row (title lines some exports carry). */
        skipLines: z.number().int().min(0).default(0),
      })
      .strict(),
    /**
     * `long`: one row per sample and assay, with an assay and a Ct column. `wide`: one row per
     * sample and one value column per assay, each headed by a lab assay name under `assays`.
     */
    layout: z.enum(['long', 'wide']).default('long'),
    /** Wide exports: the words in a value cell that mean the assay was not run (a blank cell always means so). */
    notTestedTokens: z.array(z.string()).optional(),
    /** Excel workbooks (.xlsx) from this lab: the sheet to read (default the first visible one) and the header's row (default format.skipLines + 1). */
    workbook: z
      .object({
        sheet: z.string().min(1).optional(),
        // Excel's last row (Excel specifications and limits).
        headerRow: z.number().int().min(1).max(1_048_576).optional(),
      })
      .strict()
      .optional(),
    columns: z
      .object({
        sampleId: z.string().min(1),
        /** Long exports only (a wide export's value columns name their assays). */
        assay: z.string().min(1).optional(),
        /** Long exports only: the numeric result column (a Ct or an S/P ratio); `ct` is the older name of the same key. */
        result: z.string().min(1).optional(),
        ct: z.string().min(1).optional(),
        call: z.string().min(1).optional(),
        accession: z.string().min(1).optional(),
        collectedOn: z.string().min(1).optional(),
        reportedOn: z.string().min(1).optional(),
        internalControl: z.string().min(1).optional(),
        /** A column that says whether a report is preliminary, final or corrected. */
        reportStatus: z.string().min(1).optional(),
      })
      .strict()
      .superRefine((columns, ctx) => {
        if (columns.result !== undefined && columns.ct !== undefined)
          ctx.addIssue({
            code: 'custom',
            path: ['ct'],
            message: 'names the result column a second time: keep result and remove ct',
          });
      }),
    notDetected: z
      .object({
        /** Words that mean no amplification (compared case-insensitively, trimmed). */
        tokens: z.array(z.string()).default([]),
        /** An empty Ct cell means not detected (true) or a missing value that makes the row invalid (false). */
        blankIsNotDetected: z.boolean().default(true),
        /** Numeric codes that mean not detected, e.g. 0. A Ct of 0 is never read as a strong positive. */
        numericCodes: z.array(z.number()).default([]),
        /** A Ct equal to (or above) the cycle limit means not detected. */
        cycleLimitIsNotDetected: z.boolean().default(true),
      })
      .strict()
      .default({ tokens: [], blankIsNotDetected: true, numericCodes: [], cycleLimitIsNotDetected: true }),
    /**
     * Words that mean the internal control failed, found as whole words (case and accents
     * ignored) in the internal-control, call and status cells: "ungültig" finds "IK ungültig".
     */
    controlFailedTokens: z.array(z.string()).default([]),
    /** Words that mark a corrected report superseding an earlier one (added to statusWords.corrected). */
    reissueTokens: z.array(z.string()).default([]),
    /**
     * The lab's words for its own call, per class, found as whole words in the call cell (the
     * longest phrase wins: "not detected" over "detected"). A class left out keeps the English
     * words: positive, pos, detected; negative, neg, not detected, none detected; suspect, inconclusive,
     * equivocal, indeterminate; invalid.
     */
    callWords: z
      .object({
        positive: z.array(z.string()).min(1).optional(),
        suspect: z.array(z.string()).min(1).optional(),
        negative: z.array(z.string()).min(1).optional(),
        invalid: z.array(z.string()).min(1).optional(),
      })
      .strict()
      .optional(),
    /**
     * The lab's words for the state of a report, found as whole words in the status columns. A
     * state left out keeps the English words: preliminary, pending, interim, partial; final;
     * corrected, amended, revised, reissued.
     */
    statusWords: z
      .object({
        preliminary: z.array(z.string()).min(1).optional(),
        final: z.array(z.string()).min(1).optional(),
        corrected: z.array(z.string()).min(1).optional(),
      })
      .strict()
      .optional(),
    /** Header names of the columns that carry status words (default: columns.reportStatus and columns.call). */
    statusColumns: z.array(z.string().min(1)).min(1).optional(),
    /** The lab's assay names mapped to ropewatch assays, with this lab's validated cutoffs. */
    assays: z.record(z.string(), labAssaySchema),
    /** HL7 v2 result messages from this lab (ORU^R01): see hl7Profile.ts. */
    hl7: hl7SenderSchema.optional(),
  })
  .strict();

/**
 * Sample IDs a person confirmed as mistyped (config/corrections.yaml, optional), each with the ID
 * it meant: ingest reads the row under the meant ID and records the ID as written.
 */
export const correctionsFileSchema = z
  .object({
    sampleIds: z
      .array(
        z
          .object({
            /** The sample ID as the file writes it (case and spaces ignored). */
            written: z.string().min(1),
            /** The ID it meant (a planned ID must carry its right check character). */
            meant: z.string().min(1),
            /** Only in files of this name (as received: the receipt's `file`). */
            file: z.string().min(1).optional(),
            /** Only on this line of that file (the receipt's line). */
            line: z.number().int().min(1).optional(),
            /** Who confirmed it and how: kept for the record. */
            note: z.string().optional(),
          })
          .strict(),
      )
      .default([]),
  })
  .strict();
