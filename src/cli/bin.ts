import { main } from './main.js';

/** The only place that touches process: argv, streams, signals, exit. */
export async function runFromProcess(): Promise<void> {
  let resolveStop!: () => void;
  const stopSignal = new Promise<void>((resolve) => {
    resolveStop = resolve;
  });
  process.once('SIGINT', () => resolveStop());
  process.once('SIGTERM', () => resolveStop());
  const code = await main(process.argv.slice(2), {
    stdout: (text) => process.stdout.write(text),
    stderr: (text) => process.stderr.write(text),
    cwd: process.cwd(),
    now: () => new Date(),
    env: process.env,
    stopSignal,
  });
  process.exitCode = code;
  // Let pending stdout drain, then exit so a finished watch leaves no open handle.
  process.stdout.write('', () => process.exit(code));
}

const invokedDirectly = process.argv[1] !== undefined && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/'));
if (invokedDirectly) await runFromProcess();
