/**
 * `ropewatch calc sample-size`: the fewest ropes that reach a detection confidence (exact
 * hypergeometric over N pens, or binomial for a large population).
 * @see Cameron AR, Baldock FC 1998, Prev Vet Med 34:1-17.
 */
import type { Command } from 'commander';
import { sampleSize } from '../../../stats/index.js';
import { parsePens, plural, short } from '../../calcFormat.js';
import { formatPercentSignificant } from '../../../util/format.js';
import { printJson, UsageError, type CliIo } from '../../io.js';
import { parseIntegerOption, parseProbabilityOption } from '../../parseArgs.js';

interface SampleSizeOptions {
  pens?: string;
  infected?: string;
  prevalence?: string;
  confidence?: string;
  sensitivity?: string;
  json?: boolean;
}

/** The question as checked numbers; infected and prevalence are exclusive. */
function parseQuestion(options: SampleSizeOptions) {
  const pens = parsePens(options.pens, true);
  if ((options.infected === undefined) === (options.prevalence === undefined)) {
    throw new UsageError('give exactly one of --infected or --prevalence');
  }
  if (pens === Infinity && options.infected !== undefined) {
    throw new UsageError(
      '--pens inf needs --prevalence (a number of infected pens means nothing in an infinite population)',
    );
  }
  const infected =
    options.infected === undefined ? undefined : parseIntegerOption('--infected', options.infected, 1, pens);
  const prevalence =
    options.prevalence === undefined ? undefined : parseProbabilityOption('--prevalence', options.prevalence);
  if (prevalence === 0)
    throw new UsageError('--prevalence must be above 0 (a design prevalence of 0 cannot be detected)');
  const confidence = parseProbabilityOption('--confidence', options.confidence);
  if (pens === Infinity && confidence === 1)
    throw new UsageError('--confidence 1 cannot be reached in an infinite population; give a value below 1');
  const sensitivity =
    options.sensitivity === undefined ? 1 : parseProbabilityOption('--sensitivity', options.sensitivity);
  return { pens, infected, prevalence, confidence, sensitivity };
}

type Question = ReturnType<typeof parseQuestion>;

function printSentence(io: CliIo, question: Question, result: ReturnType<typeof sampleSize>): void {
  const { pens, prevalence, confidence, sensitivity } = question;
  const population = pens === Infinity ? 'a large population' : `${pens} pens`;
  const design =
    result.infected === null
      ? `a design prevalence of ${prevalence}`
      : plural(result.infected, 'infected pen', 'infected pens');
  if (result.reachable) {
    io.stdout(
      `${plural(result.sampled!, 'rope', 'ropes')} in ${population} reach ${formatPercentSignificant(confidence)} detection confidence for ${design} ` +
        `(Se ${sensitivity}; achieved ${short(result.achievedConfidence)}).\n`,
    );
  } else {
    const rounds =
      result.roundsNeeded === null
        ? 'no number of rounds would'
        : `${result.roundsNeeded} independent negative rounds would`;
    io.stdout(
      `No number of ropes reaches ${formatPercentSignificant(confidence)} in one round for ${design} in ${population} (Se ${sensitivity}): ` +
        `a rope in every pen gives ${short(result.censusConfidence ?? 0)}; ${rounds}.\n`,
    );
  }
}

export function registerCalcSampleSize(calc: Command, io: CliIo): void {
  calc
    .command('sample-size')
    .description('fewest ropes that reach a detection confidence (pens N, or inf for a large population)')
    .option('--pens <N>', 'pens in use, or inf')
    .option('--infected <d>', 'infected pens at the design prevalence')
    .option('--prevalence <p>', 'design prevalence as a proportion of pens (d = ceil(p N))')
    .option('--confidence <C>', 'target detection confidence')
    .option('--sensitivity <Se>', 'rope (pen-level) sensitivity, default 1')
    .option('--json', 'print JSON')
    .action((options: SampleSizeOptions) => {
      const question = parseQuestion(options);
      const { pens, infected, prevalence, confidence, sensitivity } = question;
      const result = sampleSize({
        pens,
        confidence,
        sensitivity,
        ...(infected === undefined ? {} : { infected }),
        ...(prevalence === undefined ? {} : { prevalence }),
      });
      if (!options.json) {
        printSentence(io, question, result);
        return;
      }
      printJson(io, {
        pens: pens === Infinity ? 'inf' : pens,
        infected: result.infected,
        prevalence: prevalence ?? null,
        confidence,
        sensitivity,
        sampled: result.sampled,
        reachable: result.reachable,
        achievedConfidence: result.achievedConfidence,
        censusConfidence: result.censusConfidence,
        roundsNeeded: result.roundsNeeded,
      });
    });
}
