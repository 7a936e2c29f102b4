/**
 * `ropewatch retry`: the command's declaration; what it runs with (src/cli/retry.ts, the pipeline) is
 * imported when it runs.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Command } from 'commander';
import { commandModules } from '../command.js';
import { REJECTED_DIR } from '../../inboxFiles.js';
import { terminalText } from '../../util/terminalText.js';
import { DEFAULT_PLACES } from '../../workspacePaths.js';
import { addCommonOptions, type CommonOptions } from '../commonOptions.js';
import { InputRejectedError, printJson, UsageError, type CliIo } from '../io.js';

export function registerRetry(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('retry')
      .description(
        `read refused files again with the current configuration (after fixing a lab profile, say): the files named, or every file in ${DEFAULT_PLACES.rejected}; ` +
          `a file accepted now moves to ${DEFAULT_PLACES.archive}, one refused again stays with its new reason`,
      )
      .argument('[files...]', `refused files to read again (default: all of ${DEFAULT_PLACES.rejected})`)
      .option('--json', 'print the receipts as JSON'),
  ).action(async (files: string[], options: CommonOptions) => {
    const { checkInbox, rejectedFiles, retryFiles, withWorkspace } = await commandModules();
    checkInbox(io, options);
    await withWorkspace(io, options, async (ws) => {
      const targets = files.length > 0 ? files.map((file) => path.resolve(io.cwd, file)) : rejectedFiles(ws.inbox);
      for (const file of targets) if (!fs.existsSync(file)) throw new UsageError(`no such file: ${terminalText(file)}`);
      if (targets.length === 0) {
        if (options.json) printJson(io, []);
        else io.stdout(`nothing to retry: ${terminalText(path.join(ws.inbox, REJECTED_DIR))} holds no refused file\n`);
        return;
      }
      const outcome = await retryFiles(ws, targets, io, options.json === true);
      if (options.json) printJson(io, outcome.receipts);
      else io.stdout(`${outcome.accepted} of ${targets.length} accepted now; ${outcome.stillRefused} still refused\n`);
      if (outcome.stillRefused > 0)
        throw new InputRejectedError(
          `some files are still refused: see their .reason.txt in ${DEFAULT_PLACES.rejected}`,
        );
    });
  });
}
