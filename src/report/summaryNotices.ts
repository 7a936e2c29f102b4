/**
 * The notices of a round summary in words: turns the coded notices of summariseSite (a kind and
 * its facts, src/analysis/roundSummary.ts) into the sentences summary.json and the pages show,
 * and adds the cautions every human-facing output carries. No statistics in here.
 */
import type { RoundSummary, SiteFigureLabel, SummaryFacts, SummaryNotice } from '../analysis/roundSummary.js';
import { CAUTIONS, notifiableNotice } from './cautions.js';
import { designWords } from './planWording.js';

/**
 * What an antibody result means, printed with every antibody assay: an oral-fluid antibody
 * positive means exposure (infection or vaccination), and an unexpected one is retested by PCR
 * (common practice, no source).
 */
export function antibodyMeaning(assayName: string, pcrName: string | null): string {
  return (
    `${assayName} detects antibodies (S/P ratio, higher = more antibody): a positive means exposure (infection or vaccination), not necessarily current infection. ` +
    `Its detection and freedom figures are of exposure; it never resets the freedom of ${pcrName ?? 'a PCR assay'}, and an unexpected positive is retested by PCR.`
  );
}

const barnsWord = (barns: readonly string[]): string => `barn${barns.length === 1 ? '' : 's'} ${barns.join(', ')}`;

/** One notice of a round summary. */
export function summaryNoticeText(notice: SummaryNotice): string {
  switch (notice.kind) {
    case 'notifiable':
      return notifiableNotice(notice.assayName);
    case 'antibody-meaning':
      return antibodyMeaning(notice.assayName, notice.pcrName);
    case 'antibody-positive':
      return (
        `${notice.assayId} antibody positive in ${barnsWord(notice.barns)}: exposure, not necessarily current infection. ` +
        `The probability of freedom from exposure for ${notice.siteName} is reset to 0; ${notice.pcrName === null ? 'the PCR freedom' : `the freedom of ${notice.pcrName}`} is not reset (retest the positive pens by PCR).`
      );
    case 'positive':
      return (
        `${notice.assayId} positive in ${barnsWord(notice.barns)}: ${notice.siteName} is positive` +
        (notice.sinceRound !== null ? ` since round ${notice.sinceRound}` : '') +
        `. Positive barns are monitored, not surveyed, until ${notice.clearAfter} negative round${notice.clearAfter === 1 ? '' : 's'} in a row clear them; the probability of freedom then builds up again from the prior.`
      );
  }
}

/**
 * The plain reading of a sequencing candidate. Labs commonly attempt sequencing only below a Ct
 * threshold: common practice, no published source; the lab's own threshold governs.
 */
export function sequencingReading(below: number): string {
  return `Ct below ${below}: enough viral RNA that sequencing is likely to succeed (common practice, no published source).`;
}

const SMALL_NUMBERS = ['no', 'one', 'two', 'three', 'four', 'five', 'six', 'seven', 'eight', 'nine', 'ten'];

/** The plain label of a site figure: "if every barn were infected at 10% of pens", "if only one barn were infected". */
export function siteFigureLabelText(label: SiteFigureLabel): string {
  if (label.kind === 'every-barn') return `if every barn were infected at ${designWords(label.design)}`;
  return label.infectedBarns === 1
    ? 'if only one barn were infected'
    : `if only ${SMALL_NUMBERS[label.infectedBarns] ?? String(label.infectedBarns)} of the ${label.barns} barns were infected`;
}

/** The round summary with its notices and site-figure labels in words and the cautions; the keys keep their places. */
export function wordSummary(facts: SummaryFacts): RoundSummary {
  return {
    ...facts,
    assays: facts.assays.map((assay) => ({
      ...assay,
      siteFigures: assay.siteFigures.map((figure) => ({ ...figure, label: siteFigureLabelText(figure.label) })),
    })),
    sequencing: facts.sequencing.map(({ assayId, sequencingBelow, pens }) => ({
      assayId,
      sequencingBelow,
      reading: sequencingReading(sequencingBelow),
      pens,
    })),
    notices: facts.notices.map(summaryNoticeText),
    cautions: CAUTIONS,
  };
}
