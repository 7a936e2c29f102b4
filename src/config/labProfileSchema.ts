/** What a lab profile (labs/*.yaml) may say: the export's format and columns, its words, its assays. */
import { z } from 'zod';
import { spCutoffs } from './assaysSchema.js';
import { identifier } from './schemaCommon.js';

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
  })
  .strict();

/** A lab profile as the schema reads it, before it is normalised. */
export type RawLabProfile = z.output<typeof labProfileSchema>;
