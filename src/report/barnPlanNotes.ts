/**
 * The plan kernels' coded notes in words: a detection target out of reach in one round
 * (src/plan/sizing.ts), the notes on the schedule comparison (src/plan/schedule.ts) and the
 * notes under each barn of the round plan (src/plan/barnNotes.ts). No
 * statistics in here: every figure arrives computed.
 */
import type { BarnPlanNote, ScheduleNote, Unreachable } from '../plan/index.js';
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

const plural = (n: number, word: string): string => `${n} ${word}${n === 1 ? '' : 's'}`;

/** One note under a barn of the round plan. */
export function barnPlanNoteText(note: BarnPlanNote): string {
  switch (note.kind) {
    case 'period-shared':
      return (
        `Row ${note.row}: ropes every ${note.interval} pens share the factor ${note.shared} with the period of ${note.period} pens, ` +
        `so each round samples only ${note.period / note.shared} of the ${note.period} positions of the period; the rotation moves them in later rounds.`
      );
    case 'snapped':
      return `${note.snapped} of ${note.ropes} ropes moved to the nearest in-use pen (target empty or out of use).`;
    case 'coverage':
      return (
        `With ${note.ropes} ropes a round, every one of the ${note.inUsePens} in-use pens has had a rope after ` +
        `${plural(note.rounds, 'round')} (the rotation repeats every ${note.cycleLength}).`
      );
    case 'monitored-barn':
      return (
        `Positive barn: monitored, not surveyed. ${plural(note.reRope, 'positive pen')} re-roped so that their Ct series continue; ` +
        `${plural(note.tracking.length, 'fixed tracking rope')} (${note.tracking.join(', ') || 'none'}), the same pens every round, spread evenly along the barn to follow spread and clearance.`
      );
    case 'retest-not-in-use':
      return `Pen ${note.penId} is ${note.status} now; its retest rope cannot be hung.`;
    case 'ring-left-out':
      return `${note.left} ring pens left without a follow-up rope (limit ${note.limit}).`;
  }
}
