/**
 * Alternating pairs: baseline, ours, baseline, ours ... in one run, so a load that comes and goes
 * on the machine falls on both sides. Each side's CPU time (user + system: process.cpuUsage in
 * this process, or the child's own figure for a child process) is reported beside its wall time,
 * and every ratio as the median of the per-pair ratios with their range: on a shared machine
 * wall-time ratios swing, CPU-time ratios much less.
 */
export interface Timing {
  wallMs: number;
  cpuMs: number;
}

export interface Spread {
  median: number;
  min: number;
  max: number;
}

export interface PairedRatio {
  pairs: number;
  /** Medians of each side's timings. */
  ours: Timing;
  baseline: Timing;
  wallRatio: Spread;
  cpuRatio: Spread;
}

export function timeOnce(run: () => unknown): Timing {
  const cpu0 = process.cpuUsage();
  const t0 = process.hrtime.bigint();
  run();
  const wallMs = Number(process.hrtime.bigint() - t0) / 1e6;
  const cpu = process.cpuUsage(cpu0);
  return { wallMs, cpuMs: (cpu.user + cpu.system) / 1000 };
}

/** The median (the mean of the two middle values for an even count). */
export function median(values: readonly number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2;
}

export function spread(values: readonly number[]): Spread {
  return { median: median(values), min: Math.min(...values), max: Math.max(...values) };
}

/** Summarises pair i = (ours[i], baseline[i]). A CPU time under 1 µs counts as 1 µs. */
export function summarisePairs(ours: readonly Timing[], baseline: readonly Timing[]): PairedRatio {
  if (ours.length === 0 || ours.length !== baseline.length)
    throw new RangeError(`pairs need as many baseline as measured runs, got ${ours.length} and ${baseline.length}`);
  const med = (t: readonly Timing[], key: keyof Timing) => median(t.map((x) => x[key]));
  return {
    pairs: ours.length,
    ours: { wallMs: med(ours, 'wallMs'), cpuMs: med(ours, 'cpuMs') },
    baseline: { wallMs: med(baseline, 'wallMs'), cpuMs: med(baseline, 'cpuMs') },
    wallRatio: spread(ours.map((x, i) => x.wallMs / baseline[i]!.wallMs)),
    cpuRatio: spread(ours.map((x, i) => x.cpuMs / Math.max(baseline[i]!.cpuMs, 1e-3))),
  };
}

/** Runs both sides once to warm up, then `pairs` alternating pairs, baseline first, in this process. */
export function pairedRatio(ours: () => unknown, baseline: () => unknown, pairs = 7): PairedRatio {
  baseline();
  ours();
  const a: Timing[] = [];
  const b: Timing[] = [];
  for (let i = 0; i < pairs; i++) {
    b.push(timeOnce(baseline));
    a.push(timeOnce(ours));
  }
  return summarisePairs(a, b);
}

/**
 * Alternating pairs of runs that time themselves (child processes, or work with setup that must
 * stay outside the timing): `pairs` times baseline then ours, no warm-up (a child process starts
 * cold every time, alike on both sides).
 */
export async function pairedRuns(
  ours: (pair: number) => Timing | Promise<Timing>,
  baseline: (pair: number) => Timing | Promise<Timing>,
  pairs: number,
): Promise<PairedRatio> {
  const a: Timing[] = [];
  const b: Timing[] = [];
  for (let i = 0; i < pairs; i++) {
    b.push(await baseline(i));
    a.push(await ours(i));
  }
  return summarisePairs(a, b);
}

function showSpread(r: Spread, digits = 3): string {
  return `${r.median.toFixed(digits)} (${r.min.toFixed(digits)}-${r.max.toFixed(digits)})`;
}

export function describePair(p: PairedRatio): string {
  return `${p.pairs} alternating pairs: wall ${p.ours.wallMs.toFixed(2)} vs ${p.baseline.wallMs.toFixed(2)} ms, ratio ${showSpread(p.wallRatio)}; CPU ${p.ours.cpuMs.toFixed(2)} vs ${p.baseline.cpuMs.toFixed(2)} ms, ratio ${showSpread(p.cpuRatio)}`;
}

/** "0.26 (0.18-0.35)": a ratio's median and range, as the table prints it. */
export function ratioText(r: Spread): string {
  return showSpread(r, r.median >= 10 ? 1 : r.median >= 0.1 ? 2 : 3);
}
