/** The surveillance program's settings (sites.yaml: programDefaults, and each site's program). */
import { z } from 'zod';
import { probability } from './schemaCommon.js';

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
