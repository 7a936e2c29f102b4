/**
 * The surveillance program of a site (programDefaults, overridden per site): normalised once,
 * with its defaults, and the per-assay values looked up by assay and age group.
 */
import type { z } from 'zod';
import { matchKey } from './names.js';
import { didYouMean } from './nearest.js';
import type { ProblemList } from './problems.js';
import type { programSchema } from './programSchema.js';
import { formatPath } from './schemaProblems.js';
import type { DesignPrevalence, PerAssayValue, Program } from './types.js';

function normaliseDesignPrevalence(raw: z.output<typeof programSchema>['designPrevalence']): DesignPrevalence {
  return typeof raw === 'number' ? { kind: 'proportion', value: raw } : { kind: 'pens', value: raw.pens };
}

function normalisePerAssay(raw: z.output<typeof programSchema>['ropeSensitivity']): PerAssayValue {
  if (typeof raw === 'number') return { default: raw, byAssay: {} };
  const byAssay: PerAssayValue['byAssay'] = {};
  for (const [key, value] of Object.entries(raw)) {
    if (key === 'default') continue;
    (byAssay as Record<string, unknown>)[key] =
      typeof value === 'number'
        ? value
        : {
            default: value['default'],
            byAgeGroup: Object.fromEntries(Object.entries(value).filter(([k]) => k !== 'default')),
          };
  }
  return { default: raw.default, byAssay };
}

/** The configured value for an assay and age group, falling back to the assay's and then the program's default. */
export function perAssayValue(value: PerAssayValue, assayId: string, ageGroup?: string): number {
  const entry = value.byAssay[assayId];
  if (entry === undefined) return value.default;
  if (typeof entry === 'number') return entry;
  return (ageGroup !== undefined ? entry.byAgeGroup[ageGroup] : undefined) ?? entry.default ?? value.default;
}

/** Days after a round's last rope date until its results are due, when the program does not say. */
export const DEFAULT_RESULT_GRACE_DAYS = 7;
/**
 * Two negative rounds in a row before a positive barn is monitored no more: one negative round
 * after positives is too easily a gap in shedding (common practice, no source). The program may
 * say otherwise (`clearAfterNegativeRounds`).
 */
export const DEFAULT_CLEAR_AFTER_NEGATIVE_ROUNDS = 2;
/** Four fixed tracking ropes per positive barn: one in each quarter of a one-alley barn (a setting, not a sample size). */
export const DEFAULT_TRACKING_ROPES = 4;

export function normaliseProgram(raw: z.output<typeof programSchema>): Program {
  return Object.freeze({
    designPrevalence: normaliseDesignPrevalence(raw.designPrevalence),
    targetConfidence: raw.targetConfidence,
    ropeSensitivity: normalisePerAssay(raw.ropeSensitivity),
    ropeSpecificity: normalisePerAssay(raw.ropeSpecificity),
    roundWindowDays: raw.roundWindowDays,
    intervalDays: raw.intervalDays,
    priorFreedom: raw.priorFreedom,
    introductionPerInterval: raw.introductionPerInterval,
    ropeBudget: raw.ropeBudget,
    followUpRadius: raw.followUpRadius ?? 1.5,
    followUpRopes: raw.followUpRopes,
    sizeFor: raw.sizeFor ?? 'barn',
    // Shipping to the lab and a PCR run take a few days (common practice, no source); the
    // program sets its own.
    resultGraceDays: raw.resultGraceDays ?? DEFAULT_RESULT_GRACE_DAYS,
    barnDesignPrevalence:
      raw.barnDesignPrevalence === undefined
        ? undefined
        : typeof raw.barnDesignPrevalence === 'number'
          ? { kind: 'proportion' as const, value: raw.barnDesignPrevalence }
          : { kind: 'barns' as const, value: raw.barnDesignPrevalence.barns },
    clearAfterNegativeRounds: raw.clearAfterNegativeRounds ?? DEFAULT_CLEAR_AFTER_NEGATIVE_ROUNDS,
    trackingRopes: raw.trackingRopes ?? DEFAULT_TRACKING_ROPES,
    pooling:
      raw.pooling === undefined
        ? undefined
        : Object.freeze({
            poolSize: raw.pooling.poolSize,
            poolSensitivity: raw.pooling.poolSensitivity,
            poolSpecificity: raw.pooling.poolSpecificity ?? 1,
          }),
  });
}

/**
 * Refuses per-assay keys (ropeSensitivity, ropeSpecificity) that name no assay: they are looked
 * up by exact assay id, so a misspelt key would silently leave the default in force. An
 * age-group key that differs from a barn's age group only in case or spacing is refused too.
 */
export function checkPerAssayKeys(
  raw: unknown,
  prefix: readonly PropertyKey[],
  file: string,
  assayIds: ReadonlySet<string> | undefined,
  ageGroups: ReadonlySet<string>,
  problems: ProblemList,
): void {
  // Without a readable assays.yaml there is nothing to check the keys against.
  if (raw === null || typeof raw !== 'object' || assayIds === undefined) return;
  const assayByKey = new Map([...assayIds].map((id) => [matchKey(id), id]));
  const ageGroupByKey = new Map([...ageGroups].map((group) => [matchKey(group), group]));
  for (const [key, value] of Object.entries(raw)) {
    if (key === 'default') continue;
    if (!assayIds.has(key)) {
      const near = assayByKey.get(matchKey(key));
      const hint = near
        ? ` (assay ids match exactly: write ${near})`
        : didYouMean(key, assayIds)
          ? `: ${didYouMean(key, assayIds)}`
          : '';
      problems.add(file, formatPath([...prefix, key]), `names assay ${key}, which is not in assays.yaml${hint}`);
      continue;
    }
    if (value === null || typeof value !== 'object') continue;
    for (const group of Object.keys(value)) {
      const near = ageGroupByKey.get(matchKey(group));
      if (group !== 'default' && !ageGroups.has(group) && near !== undefined) {
        problems.add(
          file,
          formatPath([...prefix, key, group]),
          `age group ${JSON.stringify(group)} differs from the barns' age group ${JSON.stringify(near)}; age groups match exactly`,
        );
      }
    }
  }
}
