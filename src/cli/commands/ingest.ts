/** `ropewatch ingest <files...>`: process lab exports and rope sheets once, then exit. */
import fs from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import { terminalText } from '../../util/terminalText.js';
import { DEFAULT_PLACES } from '../../workspacePaths.js';
import { commandModules } from '../command.js';
import { addCommonOptions, type CommonOptions } from '../commonOptions.js';
import { InputRejectedError, InterruptedError, printJson, UsageError, type CliIo } from '../io.js';

export function registerIngest(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('ingest')
      .description(
        `process lab exports and rope sheets once, then exit (processed files move to ${DEFAULT_PLACES.archive}, refused ones to ${DEFAULT_PLACES.rejected})`,
      )
      .argument('<files...>', 'files to ingest (usually in the inbox)')
      .option('--json', 'print the receipts as JSON'),
  ).action(async (files: string[], options: CommonOptions) => {
    const { checkInbox, ingestFiles, signalExitCode, withWorkspace } = await commandModules();
    const resolved = files.map((file) => path.resolve(io.cwd, file));
    for (const file of resolved) if (!fs.existsSync(file)) throw new UsageError(terminalText(`no such file: ${file}`));
    checkInbox(io, options);
    const outcome = await withWorkspace(io, options, (ws) => ingestFiles(ws, resolved, io, options.json === true));
    if (options.json) printJson(io, outcome.receipts);
    if (outcome.stoppedBy !== null) {
      const done = resolved.length - outcome.left.length;
      throw new InterruptedError(
        terminalText(
          `stopped by ${outcome.stoppedBy} after ${done} of ${resolved.length} file(s); ${outcome.left.length} not started, left where they are for the next run:`,
        ) + outcome.left.map((file) => `\n  ${terminalText(file)}`).join(''),
        signalExitCode(outcome.stoppedBy),
      );
    }
    if (outcome.failed)
      throw new InputRejectedError(`some input was refused: see the receipts in ${DEFAULT_PLACES.receipts}`);
  });
}
