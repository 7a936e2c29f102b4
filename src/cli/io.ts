/**
 * What the CLI needs from the outside world, passed in so that commands run in-process in tests.
 * Only the `bin` entry touches `process`.
 */
export interface CliIo {
  stdout: (text: string) => void;
  stderr: (text: string) => void;
  /** Working directory that relative paths resolve against. */
  cwd: string;
  /** The clock; never `new Date()` inside a command. */
  now: () => Date;
  env: Readonly<Record<string, string | undefined>>;
  /**
   * Resolves when the user asks a command to stop, with the signal's name when one came
   * (`SIGINT`, `SIGTERM`). `watch` stops and exits 0; `ingest` finishes the file in hand and exits
   * 128 + the signal number. Tests pass their own.
   */
  stopSignal?: Promise<NodeJS.Signals | void>;
  /** Standard error is a terminal: long commands show their progress there (never in a log or a pipe). */
  stderrIsTerminal?: boolean;
}

/** Bad arguments or a bad request: exit code 2. The message names the option and the value. */
export class UsageError extends Error {
  override readonly name = 'UsageError';
  readonly code = 'usage';
}

/** An input was rejected (a file, a row): exit code 1, the work on other inputs went ahead. */
export class InputRejectedError extends Error {
  override readonly name = 'InputRejectedError';
  readonly code = 'input-rejected';
}

/**
 * The command was stopped by a signal before its work was done: the exit code is 128 + the
 * signal number (130 for SIGINT, 143 for SIGTERM), the shell's convention for "ended by a signal".
 */
export class InterruptedError extends Error {
  override readonly name = 'InterruptedError';
  readonly code = 'interrupted';
  constructor(
    message: string,
    readonly exitCode: number,
  ) {
    super(message);
  }
}

export const EXIT = Object.freeze({ ok: 0, rejected: 1, usage: 2 });

/** Writes a value as pretty JSON with a trailing newline. */
export function printJson(io: CliIo, value: unknown): void {
  io.stdout(JSON.stringify(value, null, 2) + '\n');
}
