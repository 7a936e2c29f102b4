import { main } from '../../src/cli/main.js';
import type { CliIo } from '../../src/cli/io.js';

export interface CliRun {
  code: number;
  stdout: string;
  stderr: string;
}

/** Runs the CLI in-process with captured streams and a fixed clock. */
export async function runCli(argv: string[], overrides: Partial<CliIo> = {}): Promise<CliRun> {
  let stdout = '';
  let stderr = '';
  const code = await main(argv, {
    stdout: (text) => {
      stdout += text;
    },
    stderr: (text) => {
      stderr += text;
    },
    cwd: process.cwd(),
    now: () => new Date('2026-12-01T12:00:00Z'),
    env: {},
    ...overrides,
  });
  return { code, stdout, stderr };
}
