/**
 * `ropewatch calc freedom`: the probability of freedom across rounds of surveillance. Rounds
 * follow the textbook order by default: rounds[i] = { posterior after round i's result,
 * nextPrior = posterior (1 - PI) }; --order discount-then-update discounts the configured prior
 * before round 1 (by hand the prior 0.495 gives 0.8305369).
 * @see Martin PAJ, Cameron AR, Greiner M 2007, Prev Vet Med 79:71-97.
 */
import type { Command } from 'commander';
import { freedomAcrossRounds, type FreedomOrder, type FreedomRound } from '../../../stats/index.js';
import { plural, short } from '../../calcFormat.js';
import { printJson, UsageError, type CliIo } from '../../io.js';
import {
  parseIntegerOption,
  parseNumberOption,
  parseProbabilityList,
  parseProbabilityOption,
} from '../../parseArgs.js';

interface FreedomCliOptions {
  prior?: string;
  roundSensitivity?: string;
  introduction?: string;
  order?: string;
  positiveRounds?: string;
  intervalDays?: string;
  elapsedDays?: string;
  json?: boolean;
}

const ORDERS: readonly FreedomOrder[] = ['update-then-discount', 'discount-then-update'];

/** --positive-rounds: 1-based round numbers, each within the rounds given. */
function parsePositives(raw: string | undefined, rounds: number): Set<number> {
  const positives = new Set<number>();
  if (raw !== undefined) {
    for (const part of raw.split(',')) {
      positives.add(parseIntegerOption('--positive-rounds item', part.trim(), 1, rounds));
    }
  }
  return positives;
}

/** --interval-days and --elapsed-days: the introduction probability's period and each round's gap. */
function parseTiming(options: FreedomCliOptions, rounds: number) {
  let intervalDays: number | undefined;
  let elapsed: number[] | undefined;
  if (options.intervalDays !== undefined) {
    intervalDays = parseNumberOption('--interval-days', options.intervalDays);
    if (!(intervalDays > 0))
      throw new UsageError(`--interval-days must be above 0, got ${JSON.stringify(options.intervalDays)}`);
  }
  if (options.elapsedDays !== undefined) {
    if (intervalDays === undefined) throw new UsageError('--elapsed-days needs --interval-days');
    elapsed = options.elapsedDays.split(',').map((part, i) => {
      const days = parseNumberOption(`--elapsed-days item ${i + 1}`, part.trim());
      if (days < 0)
        throw new UsageError(`--elapsed-days item ${i + 1} must be 0 or more days, got ${JSON.stringify(part)}`);
      return days;
    });
    if (elapsed.length !== rounds) {
      throw new UsageError(`--elapsed-days needs one value per round (${rounds}), got ${elapsed.length}`);
    }
  }
  return { intervalDays, elapsed };
}

function printSentence(io: CliIo, result: ReturnType<typeof freedomAcrossRounds>): void {
  const last = result.rounds[result.rounds.length - 1]!;
  const status = last.positive
    ? 'the last round was positive: not free'
    : `probability of freedom ${short(last.posterior)}`;
  const level =
    result.equilibrium === null
      ? ''
      : `; repeated rounds like the last level off at ${short(result.equilibrium.posterior)}`;
  io.stdout(
    `After ${plural(result.rounds.length, 'round', 'rounds')}, ${status} (next round starts from ${short(last.nextPrior)})${level}.\n`,
  );
}

export function registerCalcFreedom(calc: Command, io: CliIo): void {
  calc
    .command('freedom')
    .description('probability of freedom across negative rounds (Martin, Cameron & Greiner 2007)')
    .option('--prior <P>', 'prior probability of freedom')
    .option('--round-sensitivity <list>', 'comma-separated detection confidence of each round')
    .option('--introduction <Pi>', 'probability of introduction per interval between rounds')
    .option('--order <order>', `${ORDERS.join(' | ')} (default update-then-discount)`)
    .option('--positive-rounds <list>', 'comma-separated 1-based rounds that found infection (freedom resets)')
    .option('--interval-days <days>', 'days the introduction probability is given for; enables --elapsed-days')
    .option('--elapsed-days <list>', 'days before each round since the previous one (round 1: since the prior)')
    .option('--json', 'print JSON')
    .action((options: FreedomCliOptions) => {
      const prior = parseProbabilityOption('--prior', options.prior);
      const sensitivities = parseProbabilityList('--round-sensitivity', options.roundSensitivity);
      const introduction = parseProbabilityOption('--introduction', options.introduction);
      const order = (options.order ?? 'update-then-discount') as FreedomOrder;
      if (!ORDERS.includes(order))
        throw new UsageError(`--order must be one of ${ORDERS.join(', ')}, got ${JSON.stringify(options.order)}`);
      const positives = parsePositives(options.positiveRounds, sensitivities.length);
      const { intervalDays, elapsed } = parseTiming(options, sensitivities.length);
      const rounds: FreedomRound[] = sensitivities.map((sensitivity, i) => ({
        sensitivity,
        positive: positives.has(i + 1),
        ...(elapsed === undefined ? {} : { elapsedDays: elapsed[i]! }),
      }));
      const result = freedomAcrossRounds(
        { prior, introduction, order, ...(intervalDays === undefined ? {} : { intervalDays }) },
        rounds,
      );
      if (!options.json) {
        printSentence(io, result);
        return;
      }
      printJson(io, {
        prior,
        introduction,
        order,
        ...(intervalDays === undefined ? {} : { intervalDays, elapsedDays: elapsed ?? null }),
        positiveRounds: [...positives].sort((a, b) => a - b),
        rounds: result.rounds.map((step) => ({ posterior: step.posterior, nextPrior: step.nextPrior })),
        equilibrium: result.equilibrium,
      });
    });
}
