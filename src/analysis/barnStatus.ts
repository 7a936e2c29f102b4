/**
 * Positive status of each barn and of the site, per PCR assay, over rounds. A barn in which an
 * assay found virus is positive from that round on, and stays positive (monitored, not surveyed
 * for detection) until the program's clearance rule says otherwise. Pure: the round model and
 * the rule come in.
 *
 * What a round says about a positive barn, for one PCR assay:
 * - positive: some pen positive. The barn stays (or becomes) positive and its count of negative
 *   rounds in a row starts again from 0.
 * - negative: at least one pen with a valid result, none positive and none suspect. It counts
 *   toward clearance.
 * - nothing: the assay was not tested in the barn, every result was invalid, or a pen was
 *   suspect. It neither counts toward clearance nor breaks the run: a missed round, or a doubtful
 *   result that is retested next round, is no evidence either way.
 *
 * Only PCR assays (measure `ct`) get a status. An antibody positive means exposure (infection or
 * vaccination, weeks back) and antibody stays detectable long after virus is gone, so it neither
 * makes a barn positive for virus nor keeps it so; its pens are retested by PCR instead (common
 * practice, no source).
 *
 * The site is positive for an assay while any of its barns is, since the round the first of an
 * unbroken run of positive barns began.
 */
import type { Measure } from '../config/types.js';
import type { SiteRound } from '../rounds/roundModel.js';

/** What the clearance rule sees of a positive barn after a round. */
export interface ClearanceEvidence {
  /** Negative rounds in a row since the last positive round (see the module comment). */
  negativeRoundsInARow: number;
  /** A new group of pigs was placed in the barn (all in, all out) since it became positive. */
  newGroupPlaced: boolean;
}

/** Whether a positive barn leaves the positive state after a round. */
export type ClearanceRule = (evidence: ClearanceEvidence) => boolean;

/**
 * The program's rule: `n` negative rounds in a row, or a new group of pigs placed (the positive
 * pigs left the barn: all in, all out; common practice, no source).
 */
export function negativeRoundsRule(n: number): ClearanceRule {
  if (!Number.isInteger(n) || n < 1)
    throw new RangeError(`\`clearAfterNegativeRounds\` must be an integer in [1, infinity), got ${n}`);
  return (evidence) => evidence.newGroupPlaced || evidence.negativeRoundsInARow >= n;
}

export type PositiveState =
  | { state: 'positive'; sinceRound: number; negativeRoundsInARow: number }
  | { state: 'clear'; clearedAtRound: number | null };

export interface BarnAssayStatus {
  barnId: string;
  assayId: string;
  status: PositiveState;
}

export interface RoundStatus {
  roundNumber: number;
  /** After this round, per barn and PCR assay. */
  barns: BarnAssayStatus[];
  /** After this round, per PCR assay. */
  sites: { assayId: string; status: PositiveState }[];
}

export interface StatusInput {
  rounds: readonly SiteRound[];
  barnIds: readonly string[];
  rule: ClearanceRule;
  /** The measure of an assay; `ct` when the rounds do not say. */
  measureOf?: (assayId: string) => Measure;
  /** A new group of pigs was placed in the barn between the previous round and this one (none when absent). */
  groupPlaced?: (barnId: string, roundNumber: number) => boolean;
}

type Evidence = 'positive' | 'negative' | 'nothing';

function evidenceOf(round: SiteRound, barnId: string, assayId: string): Evidence {
  const tally = round.barns.find((barn) => barn.barnId === barnId)?.byAssay[assayId];
  if (!tally) return 'nothing';
  if (tally.positive > 0) return 'positive';
  if (tally.suspect > 0 || tally.testedPens.length === 0) return 'nothing';
  return 'negative';
}

/** The status of every barn and of the site after each round, per PCR assay (see the module comment). */
export function statusOverRounds(input: StatusInput): RoundStatus[] {
  const measureOf = (assayId: string): Measure =>
    input.rounds.find((round) => round.measures[assayId] !== undefined)?.measures[assayId] ??
    input.measureOf?.(assayId) ??
    'ct';
  const assays = [...new Set(input.rounds.flatMap((round) => round.assays))]
    .filter((assayId) => measureOf(assayId) === 'ct')
    .sort();
  const current = new Map<string, PositiveState & { groupPlaced?: boolean }>();
  const siteCurrent = new Map<string, PositiveState>();
  const key = (barnId: string, assayId: string) => `${barnId}\u0000${assayId}`;
  return input.rounds.map((round) => {
    const barns: BarnAssayStatus[] = [];
    for (const assayId of assays) {
      for (const barnId of input.barnIds) {
        const before = current.get(key(barnId, assayId)) ?? { state: 'clear', clearedAtRound: null };
        const evidence = evidenceOf(round, barnId, assayId);
        let after: PositiveState & { groupPlaced?: boolean };
        if (evidence === 'positive') {
          after =
            before.state === 'positive'
              ? { ...before, negativeRoundsInARow: 0, groupPlaced: false }
              : { state: 'positive', sinceRound: round.number, negativeRoundsInARow: 0 };
        } else if (before.state === 'positive') {
          const groupPlaced = (before.groupPlaced ?? false) || (input.groupPlaced?.(barnId, round.number) ?? false);
          const negativeRoundsInARow = before.negativeRoundsInARow + (evidence === 'negative' ? 1 : 0);
          after = input.rule({ negativeRoundsInARow, newGroupPlaced: groupPlaced })
            ? { state: 'clear', clearedAtRound: round.number }
            : { state: 'positive', sinceRound: before.sinceRound, negativeRoundsInARow, groupPlaced };
        } else {
          after = before;
        }
        current.set(key(barnId, assayId), after);
        barns.push({ barnId, assayId, status: publicState(after) });
      }
    }
    const sites = assays.map((assayId) => {
      const positives = barns.filter((entry) => entry.assayId === assayId && entry.status.state === 'positive');
      const before = siteCurrent.get(assayId) ?? { state: 'clear', clearedAtRound: null };
      let status: PositiveState;
      if (positives.length > 0) {
        const fewest = Math.min(
          ...positives.map((entry) => (entry.status.state === 'positive' ? entry.status.negativeRoundsInARow : 0)),
        );
        status = {
          state: 'positive',
          sinceRound: before.state === 'positive' ? before.sinceRound : round.number,
          negativeRoundsInARow: fewest,
        };
      } else {
        status = before.state === 'positive' ? { state: 'clear', clearedAtRound: round.number } : before;
      }
      siteCurrent.set(assayId, status);
      return { assayId, status };
    });
    return { roundNumber: round.number, barns, sites };
  });
}

function publicState(state: PositiveState & { groupPlaced?: boolean }): PositiveState {
  return state.state === 'positive'
    ? { state: 'positive', sinceRound: state.sinceRound, negativeRoundsInARow: state.negativeRoundsInARow }
    : { state: 'clear', clearedAtRound: state.clearedAtRound };
}

/** "positive since round 3" or "clear": how pages and CSV cells say a status. */
export function describeStatus(status: PositiveState): string {
  return status.state === 'positive' ? `positive since round ${status.sinceRound}` : 'clear';
}
