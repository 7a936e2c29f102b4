/**
 * The subcommands of `ropewatch calc`, in the order `calc --help` lists them. Each answers from
 * src/stats or src/spatial (hypergeometric / Cameron & Baldock 1998 detection, exact sample size,
 * 1 - prod(1 - p) across barns, Martin, Cameron & Greiner 2007 freedom, spatial clustering) and
 * prints JSON with --json or one sentence without; a missing or out-of-range argument is a
 * UsageError (exit 2) naming the option.
 * @see Cameron AR, Baldock FC 1998, Prev Vet Med 34:1-17; Martin PAJ, Cameron AR, Greiner M 2007, Prev Vet Med 79:71-97.
 */
import type { RegisterCommand } from '../../command.js';
import { registerCalcDetect } from './detect.js';
import { registerCalcFreedom } from './freedom.js';
import { registerCalcSampleSize } from './sampleSize.js';
import { registerCalcSite } from './site.js';
import { registerCalcSpatial } from './spatial.js';

export const CALC_COMMANDS: readonly RegisterCommand[] = [
  registerCalcDetect,
  registerCalcSampleSize,
  registerCalcSite,
  registerCalcFreedom,
  registerCalcSpatial,
];
