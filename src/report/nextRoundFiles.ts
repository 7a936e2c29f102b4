/**
 * The producer's rope list as data: next-round.csv (one row per rope, the columns a barn crew
 * and a lab need) and next-round.json (the plan with its reasons and numbers); and its tube
 * labels, one page per common label sheet (next-round-labels-letter.html, next-round-labels-a4.html).
 */
import type { NextRoundPlan } from '../analysis/nextRound.js';
import { CAUTIONS } from './cautions.js';
import { csvTable } from './csvTable.js';
import { LABEL_LAYOUTS, renderLabelSheetPage } from './html/labelSheetPage.js';

export const NEXT_ROUND_COLUMNS = ['sample_id', 'site', 'barn', 'pen', 'side', 'reason', 'due_date'] as const;

/** The column a plan with pools adds at the end: the rope sheet's own name for it, so the list reads back as a rope sheet. */
export const NEXT_ROUND_POOL_COLUMN = 'pool';

export function nextRoundCsv(plan: NextRoundPlan): string {
  const rows = plan.ropes.map((rope) => ({
    sample_id: rope.sampleId,
    site: rope.siteId,
    barn: rope.barnId,
    pen: rope.penId,
    side: rope.side,
    reason: rope.reason,
    due_date: rope.dueDate,
  }));
  if (!plan.ropes.some((rope) => rope.poolId !== undefined)) return csvTable(NEXT_ROUND_COLUMNS, rows);
  return csvTable(
    [...NEXT_ROUND_COLUMNS, NEXT_ROUND_POOL_COLUMN] as const,
    rows.map((row, index) => ({ ...row, pool: plan.ropes[index]!.poolId ?? null })),
  );
}

export function nextRoundJson(plan: NextRoundPlan): NextRoundPlan & { cautions: readonly string[] } {
  return { ...plan, cautions: CAUTIONS };
}

/** The tube-label pages of the plan: file name (beside next-round.html) and HTML, one per label layout. */
export function nextRoundLabelPages(plan: NextRoundPlan, notices: readonly string[]): { file: string; html: string }[] {
  return LABEL_LAYOUTS.map((layout) => ({ file: layout.file, html: renderLabelSheetPage(plan, layout, notices) }));
}
