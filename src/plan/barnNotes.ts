/**
 * The notes under one barn of the round plan, coded (a kind and its numbers and pen ids);
 * src/report/barnPlanNotes.ts words them.
 */
export type BarnPlanNote =
  /** A periodicity along a row shares a factor with the rope interval (src/plan/placement.ts). */
  | { kind: 'period-shared'; row: string; interval: number; shared: number; period: number }
  /** Systematic targets on empty or out-of-use pens moved to the nearest in-use pen. */
  | { kind: 'snapped'; snapped: number; ropes: number }
  /** Rounds of the rotation until every in-use pen has had a rope. */
  | { kind: 'coverage'; ropes: number; inUsePens: number; rounds: number; cycleLength: number }
  /** A positive barn: re-roped pens and the fixed tracking set (src/plan/monitoring.ts). */
  | { kind: 'monitored-barn'; reRope: number; tracking: string[] }
  /** A retest pen no longer in use (src/plan/followUp.ts). */
  | { kind: 'retest-not-in-use'; penId: string; status: string }
  /** Ring pens beyond the follow-up limit. */
  | { kind: 'ring-left-out'; left: number; limit: number };
