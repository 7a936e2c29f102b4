/**
 * The next round's plan as a plain value: its types and version tag, apart from the code that
 * makes it (nextRound.ts, monitoredPlan.ts), so that readers of a plan (the writers in
 * src/report, the monitoring step) need not import the planner. The planner returns a
 * `PlannedRound`, whose notes and readings are coded values (a kind and its numbers);
 * src/report/planWording.ts words it into the `NextRoundPlan` that next-round.json and the pages
 * show.
 */
import type { DesignPrevalence } from '../config/types.js';
import type {
  Allocation,
  BarnPlanNote,
  BarnPlanSummary,
  OnTimeVersusMissed,
  PlanRow,
  ScheduleNote,
  ScheduleOption,
  SimulatedDelay,
} from '../plan/index.js';

export const PLAN_SCHEMA = 'ropewatch.next-round/1';

export interface BarnSizingReport {
  barnId: string;
  assayId: string;
  pensInUse: number;
  designInfected: number;
  sensitivity: number;
  /** Which detection model sized the routine ropes. */
  model: 'spread model (fixed spatial sampling under contagious spread)' | 'hypergeometric (random placement)';
  routineRopes: number;
  /** Ropes the hypergeometric model asks for; null when no single round reaches the target. */
  hypergeometricRopes: number | null;
  /** Ropes the spread model asks for (estimate less two standard errors); null unless it sizes the plan, or when it cannot reach the target. */
  spreadModelRopes: number | null;
  reachable: boolean;
  /** When one round cannot reach the target: the best one round can do, and the rounds that would. */
  ceiling: number | null;
  roundsNeeded: number | null;
  statement: string;
  /** Detection confidence of the planned routine ropes by the model that sized them. */
  plannedDetection: number;
  /** Detection confidence of the planned routine ropes, by both models. */
  plannedHypergeometric: number;
  plannedSpreadModel: number | null;
  /** The spread model behind `plannedSpreadModel`: its Monte Carlo standard error, outbreaks simulated, their seed and assumptions. */
  spreadModel: {
    standardError: number;
    realisations: number;
    seed: number;
    transmission: number;
    background: number;
  } | null;
}

export interface NextRoundPlan {
  schema: typeof PLAN_SCHEMA;
  site: { id: string; name: string; code: string };
  basedOn: { round: number; id: string; startOn: string } | null;
  round: number;
  dueDate: string;
  overdue: boolean;
  daysOverdue: number;
  daysUntilDue: number;
  /** `poolId`: the pool the rope goes into (program `pooling`), absent for a rope tested on its own. */
  ropes: PooledPlanRow[];
  /** `monitoring`: the barn is positive and monitored instead of surveyed (src/analysis/monitoredPlan.ts). */
  barns: (Omit<BarnPlanSummary, 'notes'> & { notes: string[]; sizing: BarnSizingReport; monitoring?: MonitoredBarn })[];
  sizing: {
    /** The detection model that sized the routine ropes (analysis.sizingModel). */
    sizingModel: 'hypergeometric' | 'spatial';
    sizeFor: 'barn' | 'site';
    /** D: barns assumed infected at the site's design value (all of them unless barnDesignPrevalence says fewer). */
    infectedBarns: number;
    /** What the routine ropes prove if they come back negative on time, in one sentence, by the model that sized them. */
    ifNegative: string;
    target: number;
    budget: number | null;
    allocation: Allocation | null;
    notes: string[];
  };
  /** Site detection of the routine ropes if the round comes back negative, with `sizing.infectedBarns` of the barns infected (two-stage). */
  siteDetectionIfNegative: number;
  /** `sentence`: the forecast in words (src/report/planWording.ts). */
  freedom: (OnTimeVersusMissed & { assayId: string; currentFreedom: number; sentence: string }) | null;
  schedules: {
    barnId: string;
    static: ScheduleOption[];
    growing: (ScheduleOption & { simulated: SimulatedDelay })[];
    notes: string[];
  }[];
  seed: number;
  notes: string[];
}

export interface MonitoredBarn {
  barnId: string;
  /** PCR assays the barn is positive for. */
  assays: string[];
  /** The earliest round of the current positive period over those assays. */
  sinceRound: number;
  /** Negative rounds in a row so far (the fewest over those assays). */
  negativeRoundsInARow: number;
  /** Pens to re-rope (pensToReRope). */
  reRope: string[];
  /** Re-rope and tracking ropes, each pen once: what the barn hangs in place of routine ropes (counted in the rope budget). */
  baseRopes: number;
}

/** A planned rope, with the pool it is tested in when the program pools ropes. */
export type PooledPlanRow = PlanRow & { poolId?: string };

/** The facts of one note under the plan's sizing, in the order the plan gives them. */
export type SizingNote =
  | { kind: 'barn-target'; target: number; routineRopes: number }
  | {
      kind: 'site-target';
      target: number;
      infectedBarns: number;
      barns: number;
      barnTarget: number;
      routineRopes: number;
    }
  | { kind: 'budget-shared'; budget: number; weakestBarn: number; siteDetection: number }
  | {
      kind: 'sizing-model';
      model: 'spatial' | 'hypergeometric';
      transmission: number;
      background: number;
      realisations: number;
      seed: number;
    }
  | { kind: 'monitored-budget'; positiveBarns: number; baseRopes: number; budget: number; surveyedBudget: number };

/** The facts of one note of the plan, in the order the plan gives them. */
export type PlanNote =
  | { kind: 'results-missing'; round: number; awaiting: boolean; resultsDueOn: string; basisRound: number | null }
  | { kind: 'follow-up-cap'; ropes: number }
  | { kind: 'antibody-retests'; pens: string[] }
  | { kind: 'empty-on-due'; barnId: string; dueDate: string }
  | { kind: 'positive-pools'; pens: string[] }
  | {
      kind: 'pooling';
      poolSize: number;
      poolSensitivity: number;
      barns: { barnId: string; pooled: number; oneByOne: number }[];
    }
  | { kind: 'site-positive'; assayId: string; sinceRound: number; clearAfter: number; priorFreedom: number }
  | { kind: 'last-round-positive'; assayId: string; priorFreedom: number }
  | { kind: 'overdue'; dueDate: string; daysOverdue: number }
  | { kind: 'monitored-barns'; barnIds: string[] };

/** What one barn's routine ropes give, as facts. */
export type BarnReading =
  | {
      kind: 'detection';
      ropes: number;
      detection: number;
      designInfected: number;
      pensInUse: number;
      bySpreadModel: boolean;
      assayId: string;
      sensitivity: number;
      reachable: boolean;
      target: number;
      /** The other model's figure for the same ropes, when the spread model ran. */
      beside:
        | { kind: 'hypergeometric'; detection: number; ropes: number | null }
        | { kind: 'spread'; detection: number; standardError: number }
        | null;
    }
  | {
      kind: 'unreachable';
      barnId: string;
      target: number;
      ceiling: number;
      designInfected: number;
      pensInUse: number;
      roundsNeeded: number | null;
    }
  | {
      kind: 'monitored';
      barnId: string;
      assays: string[];
      sinceRound: number;
      reRope: number;
      tracking: number;
      followUp: number;
      retest: number;
      clearAfter: number;
      negativeRoundsInARow: number;
    };

/** What the routine ropes prove if they come back negative on time, as facts. */
export type IfNegativeReading =
  | { kind: 'none-surveyed' }
  | {
      kind: 'per-barn' | 'site';
      weakestBarn: number;
      siteDetection: number;
      target: number;
      model: 'spatial' | 'hypergeometric';
      infectedBarns: number;
      barns: number;
      design: DesignPrevalence;
    };

type PlannedBarn = NextRoundPlan['barns'][number];

/** The plan as the planner returns it: every sentence of a `NextRoundPlan` as its coded facts. */
export type PlannedRound = Omit<NextRoundPlan, 'barns' | 'sizing' | 'schedules' | 'freedom' | 'notes'> & {
  freedom: Omit<NonNullable<NextRoundPlan['freedom']>, 'sentence'> | null;
  barns: (Omit<PlannedBarn, 'sizing' | 'notes'> & {
    notes: BarnPlanNote[];
    sizing: Omit<BarnSizingReport, 'statement'> & { statement: BarnReading };
  })[];
  sizing: Omit<NextRoundPlan['sizing'], 'ifNegative' | 'notes'> & {
    ifNegative: IfNegativeReading;
    notes: SizingNote[];
  };
  schedules: (Omit<NextRoundPlan['schedules'][number], 'notes'> & { notes: ScheduleNote[] })[];
  notes: PlanNote[];
};
