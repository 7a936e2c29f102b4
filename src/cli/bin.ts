#!/usr/bin/env node
import { realpathSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { main } from './main.js';

/** The only place that touches process: argv, streams, signals, exit. */
export async function runFromProcess(): Promise<void> {
  let resolveStop!: (signal: NodeJS.Signals) => void;
  const stopSignal = new Promise<NodeJS.Signals>((resolve) => {
    resolveStop = resolve;
  });
  // Once: the first signal asks for a clean stop (watch and ingest finish the file in hand); a
  // second one of the same kind meets Node's default action and ends the process at once, which
  // the store survives (one transaction per file, the file stays in the inbox).
  process.once('SIGINT', () => resolveStop('SIGINT'));
  process.once('SIGTERM', () => resolveStop('SIGTERM'));
  const code = await main(process.argv.slice(2), {
    stdout: (text) => process.stdout.write(text),
    stderr: (text) => process.stderr.write(text),
    cwd: process.cwd(),
    now: () => new Date(),
    env: process.env,
    stopSignal,
    stderrIsTerminal: process.stderr.isTTY === true,
  });
  process.exitCode = code;
  // Let pending stdout drain, then exit so a finished watch leaves no open handle.
  process.stdout.write('', () => process.exit(code));
}

/**
 * Whether node was started with this file, directly or through a link to it (npm links the
 * package's `bin` into node_modules/.bin); not when a test imports it.
 */
function startedAsProgram(): boolean {
  const script = process.argv[1];
  if (script === undefined) return false;
  try {
    return realpathSync(script) === fileURLToPath(import.meta.url);
  } catch {
    return false;
  }
}

if (startedAsProgram()) await runFromProcess();
