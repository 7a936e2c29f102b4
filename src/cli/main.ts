import { Command, CommanderError } from 'commander';
import { EXIT, InputRejectedError, InterruptedError, UsageError, type CliIo } from './io.js';
import { COMMANDS } from './commands/index.js';
import { packageVersion } from '../util/packageVersion.js';

/**
 * Builds the command tree. Declaring it loads only commander and small modules: each command
 * (commands/, one file each) imports what it runs with when it runs, so `--help` and `--version`
 * start quickly. Each command's action throws UsageError (exit 2) or
 * InputRejectedError (exit 1), or returns normally (exit 0).
 */
export function buildProgram(io: CliIo): Command {
  const program = new Command('ropewatch');
  program
    .description(
      'Oral-fluid PCR surveillance: map lab results to pens and rounds, measure what each round proved, plan the next ropes.',
    )
    .showHelpAfterError()
    .configureOutput({ writeOut: io.stdout, writeErr: io.stderr })
    // GNU Coding Standards 4.8.1: --version prints the program's name and version on its first line.
    .version(`ropewatch ${packageVersion()}`, '-V, --version', 'print the program name and version, then exit');
  for (const register of COMMANDS) register(program, io);
  return program;
}

function applyExitOverride(command: Command): void {
  command.exitOverride();
  for (const sub of command.commands) applyExitOverride(sub);
}

/** Runs the CLI in-process and returns the exit code. `argv` excludes node and the script. */
export async function main(argv: readonly string[], io: CliIo): Promise<number> {
  const program = buildProgram(io);
  applyExitOverride(program);
  if (argv.length === 0) {
    // No command is a usage error: the help goes to stderr, exit 2 (`ropewatch --help` is exit 0).
    io.stderr(program.helpInformation());
    return EXIT.usage;
  }
  try {
    await program.parseAsync([...argv], { from: 'user' });
    return EXIT.ok;
  } catch (error) {
    if (error instanceof CommanderError) {
      if (error.code === 'commander.helpDisplayed' || error.code === 'commander.version') return EXIT.ok;
      // `ropewatch help` exits 0; a command group named without its subcommand (`ropewatch calc`)
      // prints the help as an error, which commander marks with a non-zero exit code.
      if (error.code === 'commander.help') return error.exitCode === 0 ? EXIT.ok : EXIT.usage;
      return EXIT.usage;
    }
    if (error instanceof UsageError) {
      io.stderr(`ropewatch: ${error.message}\n`);
      return EXIT.usage;
    }
    if (error instanceof RangeError) {
      io.stderr(`ropewatch: ${error.message}\n`);
      return EXIT.usage;
    }
    if (error instanceof InterruptedError) {
      io.stderr(`ropewatch: ${error.message}\n`);
      return error.exitCode;
    }
    if (error instanceof InputRejectedError) {
      io.stderr(`ropewatch: ${error.message}\n`);
      return EXIT.rejected;
    }
    throw error;
  }
}
