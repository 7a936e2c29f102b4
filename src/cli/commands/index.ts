/**
 * The commands of `ropewatch`, in the order `--help` lists them: one file each, one line here.
 * A new command is a new file exporting a RegisterCommand and a line in this list.
 */
import type { RegisterCommand } from '../command.js';
import { registerCalc } from './calc.js';
import { registerDemo } from './demo.js';
import { registerExport } from './export.js';
import { registerListen } from './listen.js';
import { registerIngest } from './ingest.js';
import { registerPlan } from './plan.js';
import { registerReport } from './report.js';
import { registerRetry } from './retry.js';
import { registerStatus } from './status.js';
import { registerStore } from './store.js';
import { registerWatch } from './watch.js';

export const COMMANDS: readonly RegisterCommand[] = [
  registerIngest,
  registerWatch,
  registerListen,
  registerStatus,
  registerReport,
  registerDemo,
  registerPlan,
  registerExport,
  registerRetry,
  registerStore,
  registerCalc,
];
