/**
 * Child processes measured from outside: wall time around the child; CPU time (user + system of
 * all its threads) and peak resident memory (VmHWM, proc(5)) reported by the child itself as it
 * exits, through a module loaded with `--import` into every measured child alike. A child that
 * dies before its exit handler runs (out of memory, a signal) still gets a figure: its CPU time
 * from this process's children's rusage (/proc/self/stat cutime + cstime, clock ticks) and the
 * last peak memory read from /proc/<pid>/status while it ran.
 */
import { spawn, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';

const MARK = 'ropewatch-bench-child ';

/** Prints `{cpuUs, hwmKb}` as the last line of stderr when the process exits. */
const HOOK = `import fs from 'node:fs';
process.on('exit', () => {
  const u = process.cpuUsage();
  let hwmKb = 0;
  try { hwmKb = Number(/^VmHWM:\\s*(\\d+)/m.exec(fs.readFileSync('/proc/self/status', 'utf8'))?.[1] ?? 0); } catch {}
  process.stderr.write('\\n${MARK}' + JSON.stringify({ cpuUs: u.user + u.system, hwmKb }) + '\\n');
});
`;

export interface ChildRun {
  wallMs: number;
  cpuMs: number;
  /** Peak resident memory, MiB (VmHWM). */
  peakRssMb: number;
  /** Exit code; null when a signal ended it. */
  status: number | null;
  signal: string | null;
  /** The child reported its own figures (it reached its exit handler). */
  reported: boolean;
  stdout: string;
  /** stderr without the hook's line. */
  stderr: string;
}

/** Writes the hook module into `dir` and returns its path (for `--import`). */
export function writeHook(dir: string): string {
  const file = path.join(dir, 'ropewatch-bench-hook.mjs');
  fs.writeFileSync(file, HOOK);
  return file;
}

let ticksPerSecond: number | undefined;

/** CPU time of this process's waited-for children so far, ms (Linux; 0 elsewhere). */
function childrenCpuMs(): number {
  try {
    ticksPerSecond ??= Number(spawnSync('getconf', ['CLK_TCK'], { encoding: 'utf8' }).stdout.trim()) || 100;
    const stat = fs.readFileSync('/proc/self/stat', 'utf8');
    // Fields after the command name in parentheses: state is field 3; cutime and cstime are 16 and 17.
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    return ((Number(fields[13]) + Number(fields[14])) * 1000) / ticksPerSecond;
  } catch {
    return 0;
  }
}

function hwmKbOf(pid: number | undefined): number {
  if (pid === undefined) return 0;
  try {
    return Number(/^VmHWM:\s*(\d+)/m.exec(fs.readFileSync(`/proc/${pid}/status`, 'utf8'))?.[1] ?? 0);
  } catch {
    return 0;
  }
}

function finish(
  raw: { stdout: string; stderr: string; status: number | null; signal: string | null },
  wallMs: number,
  cpuFallbackMs: number,
  hwmFallbackKb: number,
): ChildRun {
  const mark = raw.stderr.lastIndexOf(MARK);
  const own =
    mark < 0
      ? undefined
      : (JSON.parse(raw.stderr.slice(mark + MARK.length).split('\n')[0]!) as { cpuUs: number; hwmKb: number });
  return {
    wallMs,
    cpuMs: own ? own.cpuUs / 1000 : cpuFallbackMs,
    peakRssMb: (own ? Math.max(own.hwmKb, hwmFallbackKb) : hwmFallbackKb) / 1024,
    status: raw.status,
    signal: raw.signal,
    reported: own !== undefined,
    stdout: raw.stdout,
    stderr: mark < 0 ? raw.stderr : raw.stderr.slice(0, mark).trimEnd(),
  };
}

export interface ChildOptions {
  hook: string;
  cwd: string;
  /** Node options before the hook, e.g. `--max-old-space-size=512`. */
  nodeOptions?: readonly string[];
  /** Called about every `tickMs` while the child runs (progress); default none. */
  onTick?: (elapsedMs: number) => void;
  tickMs?: number;
}

/** Runs `node [nodeOptions] --import hook ...args` and measures it; never throws on a failed child. */
export function runChild(args: readonly string[], options: ChildOptions): Promise<ChildRun> {
  const cpu0 = childrenCpuMs();
  const t0 = performance.now();
  const child = spawn(process.execPath, [...(options.nodeOptions ?? []), '--import', options.hook, ...args], {
    cwd: options.cwd,
    stdio: ['ignore', 'pipe', 'pipe'],
  });
  let stdout = '';
  let stderr = '';
  child.stdout.setEncoding('utf8').on('data', (chunk: string) => {
    stdout += chunk;
  });
  child.stderr.setEncoding('utf8').on('data', (chunk: string) => {
    stderr += chunk;
  });
  let hwmKb = 0;
  const timer = setInterval(() => {
    hwmKb = Math.max(hwmKb, hwmKbOf(child.pid));
    options.onTick?.(performance.now() - t0);
  }, options.tickMs ?? 250);
  return new Promise((resolve, reject) => {
    child.on('error', (error) => {
      clearInterval(timer);
      reject(error);
    });
    child.on('close', (status, signal) => {
      clearInterval(timer);
      const wallMs = performance.now() - t0;
      resolve(finish({ stdout, stderr, status, signal }, wallMs, childrenCpuMs() - cpu0, hwmKb));
    });
  });
}

/** The same, synchronously (no progress, no memory polling): for short children such as `--help`. */
export function runChildSync(args: readonly string[], options: ChildOptions): ChildRun {
  const cpu0 = childrenCpuMs();
  const t0 = performance.now();
  const run = spawnSync(process.execPath, [...(options.nodeOptions ?? []), '--import', options.hook, ...args], {
    cwd: options.cwd,
    encoding: 'utf8',
    maxBuffer: 64 * 1024 * 1024,
  });
  const wallMs = performance.now() - t0;
  return finish(
    { stdout: run.stdout, stderr: run.stderr, status: run.status, signal: run.signal },
    wallMs,
    childrenCpuMs() - cpu0,
    0,
  );
}

/** The last line of a child's stdout as JSON (the figures a bench child prints). */
export function lastJsonLine<T>(run: ChildRun, what: string): T {
  if (run.status !== 0)
    throw new Error(`${what} failed (exit ${run.status ?? run.signal}): ${run.stderr.slice(-4000)}`);
  return JSON.parse(run.stdout.trim().split('\n').at(-1)!) as T;
}

/** "site 12 of 200, 34 s" on one rewritten line of stderr, only when stderr is a terminal. */
export function terminalProgress(label: string): { show: (text: string) => void; done: () => void } | undefined {
  if (!process.stderr.isTTY) return undefined;
  let shown = false;
  return {
    show: (text) => {
      process.stderr.write(`\r\x1b[2K${label}: ${text}`);
      shown = true;
    },
    done: () => {
      if (shown) process.stderr.write('\r\x1b[2K');
    },
  };
}
