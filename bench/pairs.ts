/**
 * Alternating pairs: ours, baseline, ours, baseline... in one process, so a load that comes and
 * goes on the machine falls on both sides. Each side's CPU time (user + system of this process,
 * process.cpuUsage) is reported beside its wall time, and every ratio as the median of the
 * per-pair ratios with their range: on a shared machine wall-time ratios swing, CPU-time ratios
 * much less.
 */
export interface Timing {
  wallMs: number;
  cpuMs: number;
}

export interface PairedRatio {
  pairs: number;
  ours: Timing;
  baseline: Timing;
  wallRatio: { median: number; min: number; max: number };
  cpuRatio: { median: number; min: number; max: number };
}

export function timeOnce(run: () => unknown): Timing {
  const cpu0 = process.cpuUsage();
  const t0 = process.hrtime.bigint();
  run();
  const wallMs = Number(process.hrtime.bigint() - t0) / 1e6;
  const cpu = process.cpuUsage(cpu0);
  return { wallMs, cpuMs: (cpu.user + cpu.system) / 1000 };
}

function median(values: number[]): number {
  const s = [...values].sort((a, b) => a - b);
  const mid = s.length >> 1;
  return s.length % 2 ? s[mid]! : (s[mid - 1]! + s[mid]!) / 2;
}

function spread(values: number[]) {
  return { median: median(values), min: Math.min(...values), max: Math.max(...values) };
}

/** Runs both sides once to warm up, then `pairs` alternating pairs. */
export function pairedRatio(ours: () => unknown, baseline: () => unknown, pairs = 7): PairedRatio {
  ours();
  baseline();
  const a: Timing[] = [];
  const b: Timing[] = [];
  for (let i = 0; i < pairs; i++) {
    a.push(timeOnce(ours));
    b.push(timeOnce(baseline));
  }
  const med = (t: Timing[], key: keyof Timing) => median(t.map((x) => x[key]));
  return {
    pairs,
    ours: { wallMs: med(a, 'wallMs'), cpuMs: med(a, 'cpuMs') },
    baseline: { wallMs: med(b, 'wallMs'), cpuMs: med(b, 'cpuMs') },
    wallRatio: spread(a.map((x, i) => x.wallMs / b[i]!.wallMs)),
    cpuRatio: spread(a.map((x, i) => x.cpuMs / Math.max(b[i]!.cpuMs, 1e-3))),
  };
}

export function describePair(p: PairedRatio): string {
  const f = (r: { median: number; min: number; max: number }) =>
    `${r.median.toFixed(3)} (${r.min.toFixed(3)}-${r.max.toFixed(3)})`;
  return `${p.pairs} alternating pairs: wall ${p.ours.wallMs.toFixed(2)} vs ${p.baseline.wallMs.toFixed(2)} ms, ratio ${f(p.wallRatio)}; CPU ${p.ours.cpuMs.toFixed(2)} vs ${p.baseline.cpuMs.toFixed(2)} ms, ratio ${f(p.cpuRatio)}`;
}
