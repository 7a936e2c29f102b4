/**
 * The producer's rope list as data: next-round.csv (one row per rope, the columns a barn crew
 * and a lab need) and next-round.json (the plan with its reasons and numbers).
 */
import type { NextRoundPlan } from '../analysis/nextRound.js';
import { CAUTIONS } from './cautions.js';
import { csvTable } from './csvTable.js';

export const NEXT_ROUND_COLUMNS = ['sample_id', 'site', 'barn', 'pen', 'side', 'reason', 'due_date'] as const;

export function nextRoundCsv(plan: NextRoundPlan): string {
  return csvTable(
    NEXT_ROUND_COLUMNS,
    plan.ropes.map((rope) => ({ sample_id: rope.sampleId, site: rope.siteId, barn: rope.barnId, pen: rope.penId, side: rope.side, reason: rope.reason, due_date: rope.dueDate })),
  );
}

export function nextRoundJson(plan: NextRoundPlan): NextRoundPlan & { cautions: readonly string[] } {
  return { ...plan, cautions: CAUTIONS };
}
