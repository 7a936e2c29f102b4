/**
 * The producer's rope list as data: next-round.csv (one row per rope, the columns a barn crew
 * and a lab need) and next-round.json (the plan with its reasons and numbers).
 */
import { stringify } from 'csv-stringify/sync';
import type { NextRoundPlan } from '../analysis/nextRound.js';
import { CAUTIONS } from './cautions.js';

export const NEXT_ROUND_COLUMNS = ['sample_id', 'site', 'barn', 'pen', 'side', 'reason', 'due_date'] as const;

export function nextRoundCsv(plan: NextRoundPlan): string {
  return stringify(
    plan.ropes.map((rope) => [rope.sampleId, rope.siteId, rope.barnId, rope.penId, rope.side, rope.reason, rope.dueDate]),
    { header: true, columns: [...NEXT_ROUND_COLUMNS] },
  );
}

export function nextRoundJson(plan: NextRoundPlan): NextRoundPlan & { cautions: readonly string[] } {
  return { ...plan, cautions: CAUTIONS };
}
