/** What assays.yaml may say: each assay, its measure (Ct or S/P), cutoffs and load bands. */
import { z } from 'zod';
import { identifier } from './schemaCommon.js';
import { REQUIRED_KEY_HELP } from './schemaProblems.js';

const ctCutoffs = {
  /** Ct strictly below this is positive. */
  positiveBelow: z.number().gt(0),
  /** Ct at or above `positiveBelow` and strictly below this is suspect; at or above is negative. */
  suspectBelow: z.number().gt(0),
};

/** What an assay's numeric result is: a Ct (lower = more nucleic acid) or an ELISA S/P ratio (higher = more antibody). */
export const measureSchema = z.enum(['ct', 'sp-ratio']);

/** S/P cutoffs: at or above `positiveAtOrAbove` positive; from `suspectAtOrAbove` up to it suspect. */
export const spCutoffs = {
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
