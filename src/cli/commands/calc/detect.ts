/**
 * `ropewatch calc detect`: the probability that one round of ropes finds at least one positive
 * pen (hypergeometric, imperfect rope sensitivity), optionally with pooled PCR.
 * @see Cameron AR, Baldock FC 1998, Prev Vet Med 34:1-17.
 */
import type { Command } from 'commander';
import { detectionFor, falseAlarmProbability, pooledDetection, poolSizes } from '../../../stats/index.js';
import { parsePens, plural, short } from '../../calcFormat.js';
import { formatPercentSignificant } from '../../../util/format.js';
import { printJson, UsageError, type CliIo } from '../../io.js';
import { parseIntegerOption, parseProbabilityOption } from '../../parseArgs.js';

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

interface Barn {
  pens: number;
  sampled: number;
  infected: number;
  sensitivity: number;
}

/**
 * `calc detect --pool-size k`: the pooled detection (exact over the barn's pens, pools filled at
 * random) beside the same ropes tested one by one at the rope sensitivity.
 */
function printPooled(io: CliIo, options: DetectOptions, barn: Barn): void {
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
      `find at least one positive pool with probability ${short(probability)} (${formatPercentSignificant(probability)}); tested one by one (Se ${sensitivity}) ${short(unpooledProbability)} (${formatPercentSignificant(unpooledProbability)}).\n`,
  );
}

/** Ropes tested one by one, with the false-alarm probability 1 - Sp^n when --specificity is given. */
function printSingle(io: CliIo, json: boolean, barn: Barn, specificity: number | undefined): void {
  const { pens, sampled, infected, sensitivity } = barn;
  const probability = detectionFor({ pens, infected, sensitivity })(sampled);
  const falseAlarm = specificity === undefined ? undefined : falseAlarmProbability(sampled, specificity);
  if (json) {
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
      `find at least one positive with probability ${short(probability)} (${formatPercentSignificant(probability)})${alarm}.\n`,
  );
}

export function registerCalcDetect(calc: Command, io: CliIo): void {
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
      printSingle(io, options.json === true, { pens, sampled, infected, sensitivity }, specificity);
    });
}
