/**
 * What the commands run with: the pipeline, outputs, watcher and workspace modules, imported by a
 * command when it runs (`await commandModules()`, command.ts), never when the command tree is
 * only declared. `--help`, `--version` and a usage error then load commander and the few small
 * modules of src/cli and nothing else: a start well under a second even on a loaded machine
 * (`npm run bench -- cli`).
 */
export { buildSiteRounds } from '../rounds/roundModel.js';
export { clockDay } from '../rounds/rounds.js';
export { OutputError, regenerateOutputs, regenerateSite } from '../outputs.js';
export { regenerateOutputsInParallel } from '../siteBuild/pool.js';
export { removeStrayTemps } from '../report/files.js';
export { planText } from '../report/planText.js';
export { runDemo } from '../demo/runDemo.js';
export { watchInbox } from '../watch/index.js';
export { watchConfig } from '../watch/configWatch.js';
export { shownLocation } from '../store/location.js';
export { rejectedFiles, reloadConfiguration, retryFiles } from './retry.js';
export { catchUp, deliverOwedAlerts, ingestFiles, processAndTell, signalExitCode } from './runFiles.js';
export { checkInbox, pathsOf, siteOption, withWorkspace } from './workspaceOptions.js';
