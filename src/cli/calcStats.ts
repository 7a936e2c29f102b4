/**
 * `ropewatch calc detect | sample-size | site | freedom`: the detection and freedom kernels of
 * src/stats behind a scriptable contract. With --json each prints one JSON object; without, one
 * sentence. Bad arguments are UsageError (exit 2), named by option.
 */
import type { Command } from 'commander';
import { printJson, UsageError, type CliIo } from './io.js';
import { parseIntegerOption, parseNumberOption, parseProbabilityList, parseProbabilityOption } from './parseArgs.js';
import {
  detectionFor,
  falseAlarmProbability,
  freedomAcrossRounds,
  sampleSize,
  pooledDetection,
  poolSizes,
  siteDetection,
  twoStageSiteDetection,
  type FreedomOrder,
  type FreedomRound,
} from '../stats/index.js';

/** Six significant digits for sentences; JSON carries full precision. */
function short(value: number): string {
  return String(Number(value.toPrecision(6)));
}

function percent(value: number): string {
  return `${Number((value * 100).toPrecision(3))}%`;
}

function parsePens(raw: string | undefined, allowInfinite: boolean): number {
  if (allowInfinite && raw !== undefined && /^(inf|infinity|infinite)$/i.test(raw.trim())) return Infinity;
  return parseIntegerOption('--pens', raw, 1);
}

function plural(count: number, one: string, many: string): string {
  return `${count} ${count === 1 ? one : many}`;
}

interface DetectOptions {
  pens?: string;
  sampled?: string;
  infected?: string;
  sensitivity?: string;
  specificity?: string;
  poolSize?: string;
  poolSensitivity?: string;
  poolSpecificity?: string;
  json?: boolean;
}
interface SampleSizeOptions {
  pens?: string;
  infected?: string;
  prevalence?: string;
  confidence?: string;
  sensitivity?: string;
  json?: boolean;
}
interface SiteOptions {
  barn?: string;
  infectedBarns?: string;
  json?: boolean;
}
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

/**
 * `calc detect --pool-size k`: the pooled detection (exact over the barn's pens, pools filled at
 * random) beside the same ropes tested one by one at the rope sensitivity.
 */
function printPooled(
  io: CliIo,
  options: DetectOptions,
  barn: { pens: number; sampled: number; infected: number; sensitivity: number },
): void {
  const poolSize = parseIntegerOption('--pool-size', options.poolSize, 1);
  if (options.poolSensitivity === undefined)
    throw new UsageError(
      "--pool-size needs --pool-sensitivity (the sensitivity of a pool, lower than a single rope's as the sample is diluted)",
    );
  const poolSensitivity = parseProbabilityOption('--pool-sensitivity', options.poolSensitivity);
  const poolSpecificity =
    options.poolSpecificity === undefined ? 1 : parseProbabilityOption('--pool-specificity', options.poolSpecificity);
  const { pens, sampled, infected, sensitivity } = barn;
  const probability = pooledDetection(pens, sampled, infected, poolSize, poolSensitivity, poolSpecificity);
  const unpooledProbability = detectionFor({ pens, infected, sensitivity })(sampled);
  const pools = poolSizes(sampled, poolSize).length;
  const falseAlarm = 1 - poolSpecificity ** pools;
  if (options.json) {
    printJson(io, {
      pens,
      sampled,
      infected,
      poolSize,
      pools,
      poolSensitivity,
      poolSpecificity,
      probability,
      falseAlarm,
      sensitivity,
      unpooledProbability,
    });
    return;
  }
  io.stdout(
    `${plural(sampled, 'rope', 'ropes')} in ${plural(pools, 'pool', 'pools')} of up to ${poolSize} (pool Se ${poolSensitivity}) in ${pens} pens with ${plural(infected, 'infected pen', 'infected pens')} ` +
      `find at least one positive pool with probability ${short(probability)} (${percent(probability)}); tested one by one (Se ${sensitivity}) ${short(unpooledProbability)} (${percent(unpooledProbability)}).\n`,
  );
}

/**
 * Registers `calc detect`, `calc sample-size`, `calc site` and `calc freedom` on the `calc` command.
 * Each answers from src/stats (hypergeometric / Cameron & Baldock 1998 detection, exact sample
 * size, 1 - prod(1 - p) across barns, Martin, Cameron & Greiner 2007 freedom) and prints JSON with
 * --json or one sentence without. Freedom rounds follow the textbook order by default: rounds[i] =
 * { posterior after round i's result, nextPrior = posterior (1 - PI) }; --order discount-then-update
 * discounts the configured prior before round 1 (Martin, Cameron & Greiner 2007; by hand the prior 0.495 gives 0.8305369).
 * @throws UsageError (exit 2) naming the option for a missing or out-of-range argument.
 * @see Cameron AR, Baldock FC 1998, Prev Vet Med 34:1-17; Martin PAJ, Cameron AR, Greiner M 2007, Prev Vet Med 79:71-97.
 */
export function addDetectionCalcCommands(calc: Command, io: CliIo): void {
  calc
    .command('detect')
    .description('probability that one round of ropes finds at least one positive pen')
    .option('--pens <N>', 'pens in use in the barn')
    .option('--sampled <n>', 'ropes (one per pen)')
    .option('--infected <d>', 'infected pens at the design prevalence')
    .option('--sensitivity <Se>', 'rope (pen-level) sensitivity, default 1')
    .option('--specificity <Sp>', 'rope specificity; adds the false-alarm probability 1 - Sp^n')
    .option('--pool-size <k>', 'ropes tested together in one PCR (pools of k; the last pool takes what is left)')
    .option(
      '--pool-sensitivity <PSe>',
      'sensitivity of a pool holding at least one infected rope (needed with --pool-size)',
    )
    .option('--pool-specificity <PSp>', 'specificity of a pool of clean ropes, default 1')
    .option('--json', 'print JSON')
    .action((options: DetectOptions) => {
      const pens = parsePens(options.pens, false);
      const sampled = parseIntegerOption('--sampled', options.sampled, 0, pens);
      const infected = parseIntegerOption('--infected', options.infected, 0, pens);
      const sensitivity =
        options.sensitivity === undefined ? 1 : parseProbabilityOption('--sensitivity', options.sensitivity);
      const specificity =
        options.specificity === undefined ? undefined : parseProbabilityOption('--specificity', options.specificity);
      if (options.poolSize !== undefined) {
        printPooled(io, options, { pens, sampled, infected, sensitivity });
        return;
      }
      if (options.poolSensitivity !== undefined || options.poolSpecificity !== undefined)
        throw new UsageError('--pool-sensitivity and --pool-specificity need --pool-size');
      const probability = detectionFor({ pens, infected, sensitivity })(sampled);
      const falseAlarm = specificity === undefined ? undefined : falseAlarmProbability(sampled, specificity);
      if (options.json) {
        printJson(io, {
          pens,
          sampled,
          infected,
          sensitivity,
          ...(specificity === undefined ? {} : { specificity, falseAlarm }),
          probability,
        });
        return;
      }
      const alarm =
        falseAlarm === undefined
          ? ''
          : `; an uninfected barn would give a false alarm with probability ${short(falseAlarm)} (Sp ${specificity})`;
      io.stdout(
        `${plural(sampled, 'rope', 'ropes')} in ${pens} pens with ${plural(infected, 'infected pen', 'infected pens')} (Se ${sensitivity}) ` +
          `find at least one positive with probability ${short(probability)} (${percent(probability)})${alarm}.\n`,
      );
    });

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
      const result = sampleSize({
        pens,
        confidence,
        sensitivity,
        ...(infected === undefined ? {} : { infected }),
        ...(prevalence === undefined ? {} : { prevalence }),
      });
      if (options.json) {
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
        return;
      }
      const population = pens === Infinity ? 'a large population' : `${pens} pens`;
      const design =
        result.infected === null
          ? `a design prevalence of ${prevalence}`
          : plural(result.infected, 'infected pen', 'infected pens');
      if (result.reachable) {
        io.stdout(
          `${plural(result.sampled!, 'rope', 'ropes')} in ${population} reach ${percent(confidence)} detection confidence for ${design} ` +
            `(Se ${sensitivity}; achieved ${short(result.achievedConfidence)}).\n`,
        );
      } else {
        const rounds =
          result.roundsNeeded === null
            ? 'no number of rounds would'
            : `${result.roundsNeeded} independent negative rounds would`;
        io.stdout(
          `No number of ropes reaches ${percent(confidence)} in one round for ${design} in ${population} (Se ${sensitivity}): ` +
            `a rope in every pen gives ${short(result.censusConfidence ?? 0)}; ${rounds}.\n`,
        );
      }
    });

  calc
    .command('site')
    .description('site-level detection from barn-level detection probabilities, 1 - prod(1 - p)')
    .option('--barn <list>', 'comma-separated barn detection probabilities (0 for a barn not surveyed)')
    .option(
      '--infected-barns <D>',
      'barns infection is assumed to reach, chosen at random (two-stage design); default every barn',
    )
    .option('--json', 'print JSON')
    .action((options: SiteOptions) => {
      const barns = parseProbabilityList('--barn', options.barn);
      if (options.infectedBarns !== undefined) {
        const infectedBarns = parseIntegerOption('--infected-barns', options.infectedBarns, 1, barns.length);
        const probability = twoStageSiteDetection(barns, infectedBarns);
        if (options.json) {
          printJson(io, { barns, infectedBarns, probability });
          return;
        }
        io.stdout(
          `If ${plural(infectedBarns, 'barn', 'barns')} of ${barns.length} were infected (at random), the site would detect it with probability ${short(probability)} (${percent(probability)}).\n`,
        );
        return;
      }
      const probability = siteDetection(barns);
      if (options.json) {
        printJson(io, { barns, probability });
        return;
      }
      io.stdout(
        `${plural(barns.length, 'barn', 'barns')} together detect with probability ${short(probability)} (${percent(probability)}).\n`,
      );
    });

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
      const positives = new Set<number>();
      if (options.positiveRounds !== undefined) {
        for (const part of options.positiveRounds.split(',')) {
          positives.add(parseIntegerOption('--positive-rounds item', part.trim(), 1, sensitivities.length));
        }
      }
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
        if (elapsed.length !== sensitivities.length) {
          throw new UsageError(
            `--elapsed-days needs one value per round (${sensitivities.length}), got ${elapsed.length}`,
          );
        }
      }
      const rounds: FreedomRound[] = sensitivities.map((sensitivity, i) => ({
        sensitivity,
        positive: positives.has(i + 1),
        ...(elapsed === undefined ? {} : { elapsedDays: elapsed[i]! }),
      }));
      const result = freedomAcrossRounds(
        { prior, introduction, order, ...(intervalDays === undefined ? {} : { intervalDays }) },
        rounds,
      );
      if (options.json) {
        printJson(io, {
          prior,
          introduction,
          order,
          ...(intervalDays === undefined ? {} : { intervalDays, elapsedDays: elapsed ?? null }),
          positiveRounds: [...positives].sort((a, b) => a - b),
          rounds: result.rounds.map((step) => ({ posterior: step.posterior, nextPrior: step.nextPrior })),
          equilibrium: result.equilibrium,
        });
        return;
      }
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
    });
}
