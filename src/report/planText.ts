/** The plan as a few lines of text for the terminal (`ropewatch plan`). */
import type { NextRoundPlan } from '../analysis/nextRound.js';
import { CAUTIONS } from './cautions.js';

export function planText(plan: NextRoundPlan): string {
  const lines = [
    `${plan.site.name}: round ${plan.round}, due ${plan.dueDate}${plan.overdue ? ` (OVERDUE by ${plan.daysOverdue} days)` : ''}, ${plan.ropes.length} ropes`,
  ];
  for (const barn of plan.barns) {
    lines.push(
      `  ${barn.barnId}: ${barn.ropes} ropes (${barn.routine} routine, ${barn.followUp} follow-up, ${barn.retest} retest). ${barn.sizing.statement}`,
    );
  }
  lines.push(...plan.sizing.notes.map((note) => `  ${note}`));
  lines.push(`  ${plan.sizing.ifNegative}`);
  if (plan.freedom) lines.push(`  ${plan.freedom.sentence}`);
  lines.push(...plan.notes.map((note) => `  ${note}`));
  lines.push('', 'sample_id   barn  pen   side  reason');
  for (const rope of plan.ropes)
    lines.push(
      `${rope.sampleId.padEnd(11)} ${rope.barnId.padEnd(5)} ${rope.penId.padEnd(5)} ${rope.side.padEnd(5)} ${rope.reason}`,
    );
  lines.push('', ...CAUTIONS.map((caution) => `Note: ${caution}`));
  return lines.join('\n') + '\n';
}
