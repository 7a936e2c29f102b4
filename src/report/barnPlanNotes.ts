/**
 * The plan kernels' coded notes in words: a detection target out of reach in one round
 * (src/plan/sizing.ts) and the notes on the schedule comparison (src/plan/schedule.ts). No
 * statistics in here: every figure arrives computed.
 */
import type { ScheduleNote, Unreachable } from '../plan/index.js';
import { formatPercent } from '../util/format.js';

/** Why no rope count reaches the target in one round, and how many negative rounds would. */
export function unreachableText(result: Unreachable): string {
  const what = `a rope in every one of the ${result.maxRopes} pens`;
  return result.roundsNeeded === null || result.reachedInRounds === null
    ? `No rope count reaches ${formatPercent(result.target)} detection: ${what} detects nothing (0%).`
    : `No rope count reaches ${formatPercent(result.target)} detection in one round: ${what} detects ${formatPercent(result.ceiling)}. ` +
        `${result.roundsNeeded} negative rounds in a row would reach ${formatPercent(result.reachedInRounds)}.`;
}

/** One note under a barn's schedule comparison. */
export function scheduleNoteText(note: ScheduleNote): string {
  switch (note.kind) {
    case 'odd-halving':
      return `${note.ropes} ropes do not halve; the more-often schedule uses ${note.halved} (slightly more ropes per month).`;
    case 'doubling-capped':
      return `Twice ${note.ropes} ropes exceeds the ${note.maxRopes} pens in use; the less-often schedule is capped (fewer ropes per month).`;
    case 'never-detects':
      return `${note.label}: a round detects nothing at this prevalence.`;
    case 'introduced-prevalence':
      return 'Per-round detection and expected delay are at the introduced prevalence; the simulated delay lets it grow.';
    case 'growth-doubling':
      return `Infected pens double every ${note.days} days in the growing comparison (a modelling assumption).`;
  }
}
