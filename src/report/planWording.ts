/**
 * The next round's plan in words: turns the planner's coded notes and readings (a kind and its
 * numbers, src/analysis/planTypes.ts) into the sentences next-round.json, the plan page and the
 * terminal show. No statistics in here: every figure arrives computed.
 */
import type {
  BarnReading,
  IfNegativeReading,
  NextRoundPlan,
  PlannedRound,
  PlanNote,
  SizingNote,
} from '../analysis/planTypes.js';
import type { DesignPrevalence } from '../config/types.js';
import type { OnTimeVersusMissed } from '../plan/index.js';
import { formatPercent } from '../util/format.js';
import { barnPlanNoteText, scheduleNoteText } from './barnPlanNotes.js';

const plural = (n: number, word: string): string => `${n} ${word}${n === 1 ? '' : 's'}`;

/** The design prevalence as the plan says it: "2 pens" or "10% of pens". */
export function designWords(design: DesignPrevalence): string {
  return design.kind === 'pens'
    ? `${design.value} pen${design.value === 1 ? '' : 's'}`
    : `${Math.round(design.value * 1000) / 10}% of pens`;
}

function spreadAssumptions(note: Extract<SizingNote, { kind: 'sizing-model' }>): string {
  return (
    `infection passed pen to pen over fence, facing and diagonal contacts from one pen chosen at random until the design number of pens is infected, transmission ${note.transmission} per contact and step, ` +
    `background ${note.background} per pen and step, ${note.realisations} simulated outbreaks per barn (seed ${note.seed})`
  );
}

/** One note under the plan's sizing. */
export function sizingNoteText(note: SizingNote): string {
  switch (note.kind) {
    case 'barn-target':
      return `Each barn is sized to reach ${formatPercent(note.target)} on its own: ${note.routineRopes} routine ropes.`;
    case 'site-target': {
      const infected =
        note.infectedBarns === note.barns
          ? `every one of its ${note.barns} barns infected`
          : `${note.infectedBarns} of its ${note.barns} barns infected (barns at random)`;
      return `The site target ${formatPercent(note.target)} with ${infected} is met when each barn reaches ${formatPercent(note.barnTarget)} (1 - (1 - C)^(1/D), D = ${note.infectedBarns}): ${note.routineRopes} routine ropes.`;
    }
    case 'budget-shared':
      return (
        `That is more than the budget of ${note.budget} ropes, so the budget is shared so that the least-watched barn is as well watched as possible (${formatPercent(note.weakestBarn)}), ` +
        `then to the highest site detection (${formatPercent(note.siteDetection)}), both exactly by dynamic programming. ` +
        'Maximising site detection alone would put every rope in one barn and leave the others unwatched.'
      );
    case 'sizing-model':
      return note.model === 'spatial'
        ? `Ropes are sized with the spread model (${spreadAssumptions(note)}), by its estimate less two Monte Carlo standard errors, so that another seed seldom moves the count (near the boundary it still can: more outbreaks make that rarer). ` +
            'It holds only if infection spreads between neighbouring pens as modelled; the hypergeometric count, which holds wherever infection first lands, is shown beside it.'
        : 'Ropes are sized with the hypergeometric model (Cameron & Baldock 1998): the infected pens may be any pens of the barn, so the count holds whatever places infection first. ' +
            `Beside it, the spread model (${spreadAssumptions(note)}) shows what fixed, evenly spaced ropes buy when infection spreads pen to pen.`;
    case 'monitored-budget':
      return `The re-rope and tracking ropes of the positive barn${note.positiveBarns === 1 ? '' : 's'} (${note.baseRopes}) come out of the rope budget of ${note.budget}: the surveyed barns share the other ${note.surveyedBudget}. Follow-up and retest ropes come on top, as in any barn.`;
  }
}

/** One note of the plan. */
export function planNoteText(note: PlanNote): string {
  switch (note.kind) {
    case 'results-missing':
      return (
        (note.awaiting
          ? `Round ${note.round} is awaiting its results (due by ${note.resultsDueOn}): `
          : `Round ${note.round} brought no result back: `) +
        (note.basisRound !== null
          ? `follow-up and retest ropes come from round ${note.basisRound}, the last round with results.`
          : 'no round has results to follow up yet.')
      );
    case 'follow-up-cap':
      return `Follow-up ropes: at most ${note.ropes} per barn, chosen one by one for the largest simulated gain in finding onward spread from the positives (greedy on a submodular objective: within 1 - 1/e of the best set; Nemhauser, Wolsey & Fisher 1978).`;
    case 'antibody-retests':
      return `Antibody positive without virus in ${note.pens.join(', ')}: a retest rope each, to be tested by PCR (antibody means exposure, not necessarily current infection; no follow-up ring is drawn around it).`;
    case 'empty-on-due':
      return `Barn ${note.barnId} will be empty on ${note.dueDate} (its group closed out, the next not yet placed): no rope is planned there.`;
    case 'positive-pools':
      return `Positive pool in ${note.pens.join(', ')}: a retest rope each, tested on its own, to find which pens of the pool carry the infection.`;
    case 'pooling': {
      const figures = note.barns.map(
        (barn) =>
          `${barn.barnId} ${formatPercent(barn.pooled)} pooled against ${formatPercent(barn.oneByOne)} one by one`,
      );
      return (
        `Routine ropes go into pools of ${note.poolSize} ropes of one barn (column pool); the lab tests each pool in one PCR and reports it under the pool ID. Retest and follow-up ropes are tested on their own. ` +
        `At pool sensitivity ${note.poolSensitivity}, random placement: ${figures.join(', ')}.`
      );
    }
    case 'site-positive':
      return (
        `The site is positive for ${note.assayId} since round ${note.sinceRound}: it is not free, so no probability of freedom is forecast. ` +
        `It leaves the positive state once every positive barn has had ${plural(note.clearAfter, 'negative round')} in a row; from there freedom builds up again from the prior ${formatPercent(note.priorFreedom)}.`
      );
    case 'last-round-positive':
      return (
        `The last round was positive for ${note.assayId}: the site is not free, so no probability of freedom is forecast. ` +
        `Once the herd's veterinarian judges the outbreak over, negative rounds build freedom up again from the prior ${formatPercent(note.priorFreedom)}.`
      );
    case 'overdue':
      return `The round was due on ${note.dueDate}: ${note.daysOverdue} days overdue. Every day late adds introduction risk.`;
    case 'monitored-barns':
      return (
        `Positive barn${note.barnIds.length === 1 ? '' : 's'} ${note.barnIds.join(', ')}: monitored, not surveyed. Positive pens are re-roped so that their Ct series go on, and a small fixed set of tracking pens (the same every round) follows spread and clearance; ` +
        `the detection figures of this plan count no ropes there.`
      );
  }
}

function besideText(reading: Extract<BarnReading, { kind: 'detection' }>): string {
  const beside = reading.beside;
  if (beside === null) return '';
  return beside.kind === 'hypergeometric'
    ? ` The hypergeometric model gives the same ropes ${formatPercent(beside.detection)}${beside.ropes !== null ? ` and would ask for ${beside.ropes}` : ''}.`
    : ` Under contagious spread (spread model) these evenly spaced ropes would detect ${formatPercent(beside.detection)} (Monte Carlo standard error ${formatPercent(beside.standardError)}).`;
}

/** The sentence under one barn of the plan: what its routine ropes give, or why it is monitored. */
export function barnReadingText(reading: BarnReading): string {
  switch (reading.kind) {
    case 'detection': {
      const design = `${plural(reading.designInfected, 'infected pen')} of ${reading.pensInUse}`;
      const model = reading.bySpreadModel ? 'by the spread model' : 'infected pens anywhere in the barn';
      return (
        `The systematic layer of ${reading.ropes} ropes gives ${formatPercent(reading.detection)} detection at ${design}, ${model} (${reading.assayId}, rope sensitivity ${reading.sensitivity})` +
        (reading.reachable
          ? '.'
          : `; ${formatPercent(reading.target)} is out of reach in one round even with a rope in every pen.`) +
        besideText(reading)
      );
    }
    case 'unreachable': {
      const design = `${plural(reading.designInfected, 'infected pen')} of ${reading.pensInUse}`;
      return (
        `No single round reaches ${formatPercent(reading.target)} in barn ${reading.barnId}: even a rope in every pen gives ${formatPercent(reading.ceiling)} at ${design}` +
        (reading.roundsNeeded !== null ? `; ${reading.roundsNeeded} negative rounds in a row would.` : '.')
      );
    }
    case 'monitored':
      return (
        `Barn ${reading.barnId} is positive for ${reading.assays.join(', ')} since round ${reading.sinceRound}: monitored, not sized for detection ` +
        `(${reading.reRope} re-rope, ${reading.tracking} tracking, ${reading.followUp} follow-up, ${reading.retest} retest). ` +
        `It leaves the positive state after ${plural(reading.clearAfter, 'negative round')} in a row (${reading.negativeRoundsInARow} so far) or when a new group of pigs is placed.`
      );
  }
}

/** What the routine ropes prove if they come back negative on time, in one sentence. */
export function ifNegativeText(reading: IfNegativeReading): string {
  if (reading.kind === 'none-surveyed')
    return 'No barn is surveyed for detection this round (every barn is positive and monitored, or empty): no detection figure applies.';
  const modelName = reading.model === 'spatial' ? 'spread model' : 'hypergeometric model';
  const siteWords =
    reading.infectedBarns === reading.barns
      ? `if every barn were infected at ${designWords(reading.design)}`
      : reading.infectedBarns === 1
        ? 'if only one barn were infected'
        : `if only ${reading.infectedBarns} of the ${reading.barns} barns were infected`;
  return reading.kind === 'per-barn'
    ? `If they all come back negative on time, each barn has at least ${formatPercent(reading.weakestBarn)} detection confidence at the design prevalence (target ${formatPercent(reading.target)} per barn, ${modelName}); the site ${formatPercent(reading.siteDetection)} ${siteWords}.`
    : `If they all come back negative on time, the site has ${formatPercent(reading.siteDetection)} detection confidence ${siteWords} (target ${formatPercent(reading.target)} for the site, ${modelName}).`;
}

/** The freedom forecast in one sentence: on time, without the round, and one interval late. */
export function freedomForecastText(forecast: OnTimeVersusMissed): string {
  return (
    `A negative round on time brings the probability of freedom to ${formatPercent(forecast.onTime)}; ` +
    `missing it leaves ${formatPercent(forecast.withoutRound)} on the due date, and a negative round one interval later reaches only ${formatPercent(forecast.missed)}.`
  );
}

/** The plan with every coded note and reading in words; the keys keep their places. */
export function wordPlan(planned: PlannedRound): NextRoundPlan {
  return {
    ...planned,
    barns: planned.barns.map((barn) => ({
      ...barn,
      notes: barn.notes.map(barnPlanNoteText),
      sizing: { ...barn.sizing, statement: barnReadingText(barn.sizing.statement) },
    })),
    sizing: {
      ...planned.sizing,
      ifNegative: ifNegativeText(planned.sizing.ifNegative),
      notes: planned.sizing.notes.map(sizingNoteText),
    },
    freedom: planned.freedom && { ...planned.freedom, sentence: freedomForecastText(planned.freedom) },
    schedules: planned.schedules.map((schedule) => ({ ...schedule, notes: schedule.notes.map(scheduleNoteText) })),
    notes: planned.notes.map(planNoteText),
  };
}
