/** `ropewatch demo`: the invented demo scenario end to end. */
import type { Command } from 'commander';
import { commandModules } from '../command.js';
import { addCommonOptions, type CommonOptions } from '../commonOptions.js';
import type { CliIo } from '../io.js';
import { DEFAULT_PLACES } from '../../workspacePaths.js';

export function registerDemo(program: Command, io: CliIo): void {
  addCommonOptions(
    program
      .command('demo')
      .description(
        `run the invented demo scenario end to end: writes ${DEFAULT_PLACES.config}, drops files into ${DEFAULT_PLACES.inbox} and processes them into ${DEFAULT_PLACES.outbox} (resets the demo store first); ` +
          'refuses a config folder holding files it did not write (use --config <other dir>)',
      )
      .option(
        '--force',
        'also reset a store that holds files the demo did not make (a configuration the demo did not write is never replaced)',
      ),
  ).action(async (options: CommonOptions & { force?: boolean }) => {
    const { pathsOf, runDemo } = await commandModules();
    await runDemo(io, pathsOf(io, options), options.force === true);
  });
}
