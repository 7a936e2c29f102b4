/**
 * What each round proved: detection confidence per barn and site at the program's design
 * prevalence, the ropes the target would have needed, prevalence when positives exist, and the
 * probability of freedom across rounds. Pure: the round model and the program come in.
 */
import { perAssayValue } from '../config/load.js';
import type { Barn, Measure, Program, Site } from '../config/types.js';
import type { GroupRef } from '../interpret/groups.js';
import type { SiteRound } from '../interpret/roundModel.js';
import { daysBetween } from '../interpret/rounds.js';
import {
  apparentPrevalence,
  designInfectedPens,
  detectionFor,
  falseAlarmProbability,
  freedomAcrossRounds,
  freedomEquilibrium,
  sampleSize,
  siteDetection,
  truePrevalence,
} from '../stats/index.js';

export interface BarnConfidence {
  barnId: string;
  assayId: string;
  /** `sp-ratio`: an antibody assay, whose figures are about exposure (see SiteConfidence). */
  measure: Measure;
  /** N: pens in use. */
  pens: number;
  /** n: pens with a valid result for this assay (invalid results prove nothing). */
  tested: number;
  /** d: infected pens at the design prevalence. */
  designInfected: number;
  sensitivity: number;
  specificity: number;
  /** P(at least one positive | infection at the design prevalence), Cameron & Baldock 1998. */
  detectionConfidence: number;
  /** Chance of at least one false positive from an uninfected barn: 1 - Sp^n. */
  falseAlarm: number;
  /** Ropes one round needs to reach the target; null when no single round can. */
  ropesNeeded: number | null;
  targetReachable: boolean;
  /** Best confidence a rope in every pen gives, when the target is unreachable in one round. */
  censusConfidence: number | null;
  roundsNeededIfUnreachable: number | null;
  positives: number;
  prevalence: PrevalenceEstimate | null;
  /** The group of pigs in the barn this round (null: not run by groups, or empty). */
  group: GroupRef | null;
  /**
   * The barn was empty (between a group's close-out and the next placement): nothing to detect,
   * so the detection figures above are 0 and stand for no figure; not a missed round.
   */
  empty: boolean;
  /**
   * Probability of freedom of this barn and assay, built from this group's rounds only (Martin,
   * Cameron & Greiner 2007): a new group restarts it from the configured prior, since the pigs
   * the earlier rounds tested have left. Null for an empty barn.
   */
  freedom: number | null;
  /** The probability of freedom this barn's round started from (null for an empty barn). */
  priorFreedom: number | null;
  /** This is the first round of a new group: the barn's freedom started again from the prior. */
  freedomRestart: boolean;
}

export interface PrevalenceEstimate {
  apparent: number;
  lower95: number;
  upper95: number;
  /** Rogan & Gladen 1978, clipped to [0, 1]. */
  trueEstimate: number;
  clipped: boolean;
  note: string | null;
}

/**
 * Detection and freedom of one assay on a site. Each assay keeps its own: an antibody assay
 * (measure sp-ratio) detects exposure (infection or vaccination, weeks back), so a negative
 * antibody round adds to the probability of freedom from exposure and a positive one resets
 * that, never the freedom of a PCR assay, which is about virus present now.
 */
export interface SiteConfidence {
  assayId: string;
  measure: Measure;
  roundNumber: number;
  /** 1 - prod(1 - p_barn): the round's site-level sensitivity (SSe). */
  detectionConfidence: number;
  positive: boolean;
  positiveBarns: string[];
  /** Days since the previous round started (null for the first round). */
  daysSincePrevious: number | null;
  /** Probability the introduction between the previous round and this one was applied over. */
  introductionApplied: number;
  /** Probability of freedom the round started from. */
  priorFreedom: number;
  /** Probability of freedom after this round (0 after a positive round: reset). */
  freedom: number;
  /** What the next round starts from if nothing else is learned. */
  nextPrior: number;
  /** Where repeated rounds like this one level off. */
  levelsOffAt: number;
  freedomReset: boolean;
}

export interface RoundConfidence {
  roundNumber: number;
  barns: BarnConfidence[];
  sites: SiteConfidence[];
}

export function designInfectedFor(program: Program, pens: number): number {
  return program.designPrevalence.kind === 'pens' ? Math.min(pens, program.designPrevalence.value) : designInfectedPens(program.designPrevalence.value, pens);
}

/** Rope sensitivity and specificity of an assay in a barn (by its age group). */
export function ropeAccuracy(program: Program, assayId: string, barn: Barn): { sensitivity: number; specificity: number } {
  return {
    sensitivity: perAssayValue(program.ropeSensitivity, assayId, barn.ageGroup),
    specificity: perAssayValue(program.ropeSpecificity, assayId, barn.ageGroup),
  };
}

function barnConfidence(site: Site, round: SiteRound, barn: Barn, assayId: string): BarnConfidence {
  const program = site.program;
  const barnRound = round.barns.find((candidate) => candidate.barnId === barn.id)!;
  const tally = barnRound.byAssay[assayId]!;
  const pens = barnRound.pensInUse;
  // A rope hung in a pen the layout lists as empty still tested pigs; never count more than N.
  // An empty barn tested no pigs whatever ropes say: it proves nothing this round.
  const tested = barnRound.empty ? 0 : Math.min(pens, tally.testedPens.length);
  const designInfected = designInfectedFor(program, pens);
  const { sensitivity, specificity } = ropeAccuracy(program, assayId, barn);
  const detectionConfidence = detectionFor({ pens, infected: designInfected, sensitivity })(tested);
  const size = sampleSize({ pens, infected: designInfected, confidence: program.targetConfidence, sensitivity });
  let prevalence: PrevalenceEstimate | null = null;
  if (tally.positive > 0 && tested > 0) {
    const apparent = apparentPrevalence(Math.min(tally.positive, tested), tested);
    const corrected = truePrevalence(apparent.estimate, sensitivity, specificity);
    prevalence = {
      apparent: apparent.estimate,
      lower95: apparent.lower,
      upper95: apparent.upper,
      trueEstimate: corrected.estimate,
      clipped: corrected.clipped,
      note: corrected.note,
    };
  }
  return {
    barnId: barn.id,
    assayId,
    measure: round.measures[assayId] ?? 'ct',
    pens,
    tested,
    designInfected,
    sensitivity,
    specificity,
    detectionConfidence,
    falseAlarm: falseAlarmProbability(tested, specificity),
    ropesNeeded: size.sampled,
    targetReachable: size.reachable,
    censusConfidence: size.reachable ? null : size.censusConfidence,
    roundsNeededIfUnreachable: size.reachable ? null : size.roundsNeeded,
    positives: tally.positive,
    prevalence,
    group: barnRound.group,
    empty: barnRound.empty,
    freedom: null,
    priorFreedom: null,
    freedomRestart: false,
  };
}

/**
 * Per barn and assay, the probability of freedom across the rounds of the barn's current group
 * (Martin, Cameron & Greiner 2007, update then discount, introduction scaled to the days
 * between the group's rounds). A round of another group starts a new chain from the configured
 * prior (all-in/all-out: the earlier group's pigs, and what their rounds proved, have left; common
 * practice, no source); a round in which the barn is empty is left out of the chain.
 */
function barnFreedom(site: Site, rounds: readonly SiteRound[], perRound: readonly RoundConfidence[]): void {
  const program = site.program;
  for (const barn of site.barns) {
    const assays = [...new Set(rounds.flatMap((round) => round.assays))];
    for (const assayId of assays) {
      type Link = { entry: BarnConfidence; startOn: string };
      const chains: Link[][] = [];
      let chainKey: string | undefined;
      rounds.forEach((round, index) => {
        const entry = perRound[index]!.barns.find((candidate) => candidate.barnId === barn.id && candidate.assayId === assayId);
        if (entry === undefined || entry.empty) return;
        const key = entry.group?.id ?? '';
        if (chainKey === undefined || key !== chainKey) {
          chains.push([]);
          chainKey = key;
        }
        chains.at(-1)!.push({ entry, startOn: round.startOn });
      });
      chains.forEach((chain, chainIndex) => {
        const steps = freedomAcrossRounds(
          { prior: program.priorFreedom, introduction: program.introductionPerInterval, order: 'update-then-discount', intervalDays: program.intervalDays },
          chain.map((link, index) => ({
            sensitivity: link.entry.detectionConfidence,
            positive: link.entry.positives > 0,
            elapsedDays: index === 0 ? program.intervalDays : Math.max(0, daysBetween(chain[index - 1]!.startOn, link.startOn)),
          })),
        ).rounds;
        chain.forEach((link, index) => {
          link.entry.priorFreedom = steps[index]!.prior;
          link.entry.freedom = steps[index]!.posterior;
          // A chain after the first began with a change of group (the first may too, when it is a group).
          link.entry.freedomRestart = index === 0 && (chainIndex > 0 || link.entry.group !== null);
        });
      });
    }
  }
}

/**
 * Confidence for every round of a site, per barn and assay, and freedom across rounds per assay.
 * A round in which an assay was not tested at all counts as a round of zero sensitivity: the
 * introduction risk still accrues, so a missed or late round lowers confidence. Assays never
 * share a freedom: a positive of one (an antibody assay's above all) resets only its own.
 */
export function siteConfidence(site: Site, rounds: readonly SiteRound[]): RoundConfidence[] {
  const program = site.program;
  const assays = [...new Set(rounds.flatMap((round) => round.assays))].sort();
  const perRound: RoundConfidence[] = rounds.map((round) => ({
    roundNumber: round.number,
    barns: round.assays.flatMap((assayId) => site.barns.map((barn) => barnConfidence(site, round, barn, assayId))),
    sites: [],
  }));
  for (const assayId of assays) {
    const freedomRounds = rounds.map((round, index) => {
      // An empty barn has no pigs to find: it adds nothing to the site's detection (not a missed barn).
      // A positive is never set aside, even from a barn the configuration calls empty.
      const barns = perRound[index]!.barns.filter((barn) => barn.assayId === assayId);
      const stocked = barns.filter((barn) => !barn.empty);
      const sensitivity = stocked.length === 0 ? 0 : siteDetection(stocked.map((barn) => barn.detectionConfidence));
      const previous = rounds[index - 1];
      return {
        sensitivity,
        positive: barns.some((barn) => barn.positives > 0),
        positiveBarns: barns.filter((barn) => barn.positives > 0).map((barn) => barn.barnId),
        elapsedDays: previous ? Math.max(0, daysBetween(previous.startOn, round.startOn)) : program.intervalDays,
        daysSincePrevious: previous ? daysBetween(previous.startOn, round.startOn) : null,
      };
    });
    const freedom = freedomAcrossRounds(
      { prior: program.priorFreedom, introduction: program.introductionPerInterval, order: 'update-then-discount', intervalDays: program.intervalDays },
      freedomRounds,
    );
    freedomRounds.forEach((round, index) => {
      const step = freedom.rounds[index]!;
      const previousStep = freedom.rounds[index - 1];
      perRound[index]!.sites.push({
        assayId,
        measure: rounds.find((candidate) => candidate.measures[assayId] !== undefined)?.measures[assayId] ?? 'ct',
        roundNumber: rounds[index]!.number,
        detectionConfidence: round.sensitivity,
        positive: round.positive,
        positiveBarns: round.positiveBarns,
        daysSincePrevious: round.daysSincePrevious,
        introductionApplied: previousStep ? previousStep.introduction : 0,
        priorFreedom: step.prior,
        freedom: step.posterior,
        nextPrior: step.nextPrior,
        levelsOffAt: freedomEquilibrium(round.sensitivity, program.introductionPerInterval).posterior,
        freedomReset: round.positive,
      });
    });
  }
  barnFreedom(site, rounds, perRound);
  return perRound;
}
