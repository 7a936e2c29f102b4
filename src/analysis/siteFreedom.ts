/**
 * Freedom across rounds: the site's two-stage figures per round, each barn's and the site's
 * positive or clear status, and the probability of freedom per assay, chained over the rounds
 * counted (a round awaiting its results is not). Pure.
 */
import type { Program, Site } from '../config/types.js';
import type { SiteRound } from '../rounds/roundModel.js';
import { daysBetween } from '../rounds/rounds.js';
import { statusOverRounds, type ClearanceRule } from './barnStatus.js';
import {
  designInfectedBarns,
  freedomAcrossRounds,
  freedomEquilibrium,
  siteDetection,
  twoStageSiteDetection,
} from '../stats/index.js';

import type { BarnConfidence, SiteConfidence, RoundConfidence } from './confidenceTypes.js';

/**
 * D, the barns assumed infected when a site of `barns` barns is judged as a whole: the program's
 * barn-level design value (a proportion rounded up, or a number), or every barn without one.
 */
export function designBarnsFor(program: Program, barns: number): number {
  return program.barnDesignPrevalence === undefined ? barns : designInfectedBarns(program.barnDesignPrevalence, barns);
}

/**
 * The site figures of one round from its barns' detection probabilities. Barns of the site that
 * are not among `barnProbabilities` (no rope this round) count with p = 0 (two-stage design:
 * Cameron & Baldock 1998; the same as epiR's rsu.sep.rs2st with an unsampled herd).
 */
export function siteFigures(
  program: Program,
  siteBarns: number,
  barnProbabilities: readonly number[],
): Pick<
  SiteConfidence,
  | 'detectionConfidence'
  | 'barns'
  | 'infectedBarns'
  | 'detectionIfEveryBarn'
  | 'fewInfectedBarns'
  | 'detectionIfFewBarns'
> {
  const barns = Math.max(siteBarns, barnProbabilities.length);
  if (barnProbabilities.length === 0)
    return {
      detectionConfidence: 0,
      barns,
      infectedBarns: barns,
      detectionIfEveryBarn: 0,
      fewInfectedBarns: 1,
      detectionIfFewBarns: 0,
    };
  const probabilities = [...barnProbabilities, ...Array.from({ length: barns - barnProbabilities.length }, () => 0)];
  const infectedBarns = designBarnsFor(program, barns);
  const fewInfectedBarns = infectedBarns < barns ? infectedBarns : 1;
  const detectionIfEveryBarn = siteDetection(probabilities);
  const detectionIfFewBarns = twoStageSiteDetection(probabilities, fewInfectedBarns);
  return {
    detectionConfidence: infectedBarns === barns ? detectionIfEveryBarn : detectionIfFewBarns,
    barns,
    infectedBarns,
    detectionIfEveryBarn,
    fewInfectedBarns,
    detectionIfFewBarns,
  };
}

/**
 * Per barn and assay, the probability of freedom across the rounds of the barn's current group
 * (Martin, Cameron & Greiner 2007, update then discount, introduction scaled to the days
 * between the group's rounds). A round of another group starts a new chain from the configured
 * prior (all-in/all-out: the earlier group's pigs, and what their rounds proved, have left; common
 * practice, no source); a round in which the barn is empty is left out of the chain.
 */
export function barnFreedom(site: Site, rounds: readonly SiteRound[], perRound: readonly RoundConfidence[]): void {
  const program = site.program;
  for (const barn of site.barns) {
    const assays = [...new Set(rounds.flatMap((round) => round.assays))];
    for (const assayId of assays) {
      type Link = { entry: BarnConfidence; startOn: string };
      const chains: Link[][] = [];
      let chainKey: string | undefined;
      rounds.forEach((round, index) => {
        const entry = perRound[index]!.barns.find(
          (candidate) => candidate.barnId === barn.id && candidate.assayId === assayId,
        );
        if (entry === undefined || entry.empty || round.state === 'awaiting-results') return;
        const key = entry.group?.id ?? '';
        if (chainKey === undefined || key !== chainKey) {
          chains.push([]);
          chainKey = key;
        }
        chains.at(-1)!.push({ entry, startOn: round.startOn });
      });
      chains.forEach((chain, chainIndex) => {
        const steps = freedomAcrossRounds(
          {
            prior: program.priorFreedom,
            introduction: program.introductionPerInterval,
            order: 'update-then-discount',
            intervalDays: program.intervalDays,
          },
          chain.map((link, index) => ({
            sensitivity: link.entry.detectionConfidence,
            positive: link.entry.positives > 0,
            elapsedDays:
              index === 0 ? program.intervalDays : Math.max(0, daysBetween(chain[index - 1]!.startOn, link.startOn)),
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

type Statuses = ReturnType<typeof statusOverRounds>;

/** Each barn's positive or clear status over the rounds, per assay. */
export function barnStatuses(site: Site, rounds: readonly SiteRound[], rule: ClearanceRule): Statuses {
  // All-in/all-out: a new group of pigs in a positive barn ends its positive state (the infected
  // pigs have left), whatever the run of negative rounds (common practice, no source).
  const groupOf = (roundIndex: number, barnId: string) =>
    rounds[roundIndex]?.barns.find((barn) => barn.barnId === barnId)?.group?.id ?? null;
  // Rounds by number, found once rather than searched for every barn and round.
  const indexOfNumber = new Map<number, number>();
  rounds.forEach((round, index) => {
    if (!indexOfNumber.has(round.number)) indexOfNumber.set(round.number, index);
  });
  const groupPlaced = (barnId: string, roundNumber: number) => {
    const index = indexOfNumber.get(roundNumber) ?? -1;
    const group = groupOf(index, barnId);
    return group !== null && index > 0 && group !== groupOf(index - 1, barnId);
  };
  return statusOverRounds({ rounds, barnIds: site.barns.map((barn) => barn.id), rule, groupPlaced });
}

/** A round counted in the freedom chain, by its index among all rounds. */
interface Counted {
  round: SiteRound;
  index: number;
}

/** What each counted round proved for the site and one assay: the two-stage figures, positives, and the days between rounds. */
function siteEvidence(site: Site, perRound: readonly RoundConfidence[], counted: readonly Counted[], assayId: string) {
  const program = site.program;
  return counted.map(({ round, index }, position) => {
    // An empty barn has no pigs to find: it adds nothing to the site's detection (not a missed barn),
    // and it cannot be one of the infected barns of the two-stage figure.
    // A positive is never set aside, even from a barn the configuration calls empty.
    const barns = perRound[index]!.barns.filter((barn) => barn.assayId === assayId);
    const stocked = barns.filter((barn) => !barn.empty);
    const siteBarns = site.barns.length - (barns.length - stocked.length);
    const figures = siteFigures(
      program,
      siteBarns,
      stocked.map((barn) => barn.detectionConfidence),
    );
    const sensitivity = figures.detectionConfidence;
    const pooled = stocked.some((barn) => barn.pooled !== undefined);
    const unpooled = pooled
      ? siteFigures(
          program,
          siteBarns,
          stocked.map((barn) => barn.pooled?.unpooledDetectionConfidence ?? barn.detectionConfidence),
        ).detectionConfidence
      : undefined;
    const previous = counted[position - 1]?.round;
    return {
      sensitivity,
      figures,
      unpooled,
      // A positive pool says the barn holds infection even though no single pen is named.
      positive: barns.some((barn) => barn.positives > 0 || (barn.pooled?.positivePools ?? 0) > 0),
      positiveBarns: barns
        .filter((barn) => barn.positives > 0 || (barn.pooled?.positivePools ?? 0) > 0)
        .map((barn) => barn.barnId),
      elapsedDays: previous ? Math.max(0, daysBetween(previous.startOn, round.startOn)) : program.intervalDays,
      daysSincePrevious: previous ? daysBetween(previous.startOn, round.startOn) : null,
    };
  });
}

/** The site's freedom for one assay across the counted rounds, added to each round's confidence. */
export function addSiteFreedom(
  site: Site,
  rounds: readonly SiteRound[],
  perRound: RoundConfidence[],
  counted: readonly Counted[],
  statuses: Statuses,
  assayId: string,
): void {
  const program = site.program;
  const freedomRounds = siteEvidence(site, perRound, counted, assayId);
  const freedom = freedomAcrossRounds(
    {
      prior: program.priorFreedom,
      introduction: program.introductionPerInterval,
      order: 'update-then-discount',
      intervalDays: program.intervalDays,
    },
    freedomRounds,
  );
  // The assay's measure, as the first round that tested it names it (the same for every round).
  const measure = rounds.find((candidate) => candidate.measures[assayId] !== undefined)?.measures[assayId] ?? 'ct';
  freedomRounds.forEach((round, position) => {
    const step = freedom.rounds[position]!;
    const previousStep = freedom.rounds[position - 1];
    const index = counted[position]!.index;
    const status = statuses[index]!.sites.find((entry) => entry.assayId === assayId)?.status ?? null;
    perRound[index]!.sites.push({
      assayId,
      measure,
      roundNumber: rounds[index]!.number,
      ...round.figures,
      ...(round.unpooled === undefined ? {} : { unpooledDetectionConfidence: round.unpooled }),
      positive: round.positive,
      positiveBarns: round.positiveBarns,
      daysSincePrevious: round.daysSincePrevious,
      introductionApplied: previousStep ? previousStep.introduction : 0,
      priorFreedom: step.prior,
      // The negative rounds that clear a site count as evidence from the prior on (Martin,
      // Cameron & Greiner 2007 restart after a positive round); only the number is withheld
      // while the site is positive.
      freedom: status?.state === 'positive' ? null : step.posterior,
      status,
      nextPrior: step.nextPrior,
      levelsOffAt: freedomEquilibrium(round.sensitivity, program.introductionPerInterval).posterior,
      freedomReset: round.positive,
    });
  });
}
