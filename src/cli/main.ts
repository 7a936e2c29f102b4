import { Command, CommanderError } from 'commander';
import { EXIT, InputRejectedError, InterruptedError, UsageError, type CliIo } from './io.js';
import { registerCalc } from './calc.js';
import { registerPipelineCommands } from './commands.js';
import { registerRetry } from './retry.js';

/**
 * Builds the command tree. Each command's action throws UsageError (exit 2) or
 * InputRejectedError (exit 1), or returns normally (exit 0).
 */
export function buildProgram(io: CliIo): Command {
  const program = new Command('ropewatch');
  program
    .description('Oral-fluid PCR surveillance: map lab results to pens and rounds, measure what each round proved, plan the next ropes.')
    .showHelpAfterError()
    .configureOutput({ writeOut: io.stdout, writeErr: io.stderr });
  registerPipelineCommands(program, io);
  registerRetry(program, io);
  registerCalc(program, io);
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
  try {
    await program.parseAsync([...argv], { from: 'user' });
    return EXIT.ok;
  } catch (error) {
    if (error instanceof CommanderError) {
      if (error.code === 'commander.helpDisplayed' || error.code === 'commander.help' || error.code === 'commander.version') return EXIT.ok;
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
