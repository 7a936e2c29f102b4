/**
 * Ct trend of one pen across rounds as a small plain-SVG line chart. The Ct axis runs downward
 * in value (low Ct at the top) so that "up" means more virus, and the axis says so in words.
 */
import { COLOURS } from './palette.js';
import { escapeHtml } from './escape.js';

export interface TrendPoint {
  round: number;
  /** Short label under the axis, e.g. "r05". */
  label: string;
  /** Null when not detected (drawn as a hollow marker on the cycle-limit line). */
  ct: number | null;
  resultClass: string;
}

export interface TrendOptions {
  title: string;
  /** The run's cycle limit (the bottom of the axis: not detected). */
  cycleLimit: number;
  /** Positive cutoff, drawn as a dashed line; null for none. */
  positiveBelow: number | null;
  /** Every round of the site up to this one, for the x axis. */
  rounds: readonly { round: number; label: string }[];
  width?: number;
  height?: number;
}

const fmt = (value: number) => String(Math.round(value * 10) / 10);

/**
 * The y axis range of a trend: from the lowest Ct shown (rounded down to 5, at most 20) to the
 * cycle limit, with the lowest Ct at the top.
 * @param cts detected Ct values (finite, > 0)
 * @param cycleLimit the run's cycle limit, > 0
 * @throws RangeError for a bad cycle limit or Ct
 */
export function ctAxis(cts: readonly number[], cycleLimit: number): { top: number; bottom: number } {
  if (!Number.isFinite(cycleLimit) || cycleLimit <= 0) throw new RangeError(`\`cycleLimit\` must be a number > 0, got ${cycleLimit}`);
  for (const ct of cts) if (!Number.isFinite(ct) || ct <= 0) throw new RangeError(`\`ct\` must be a number > 0, got ${ct}`);
  const lowest = Math.min(20, ...cts);
  const top = Math.max(0, Math.floor(lowest / 5) * 5);
  return { top, bottom: Math.max(cycleLimit, ...cts) };
}

/**
 * Renders a Ct trend chart (line through detected Ct values, rounds on the x axis, Ct inverted
 * on the y axis). Filled dot: detected; hollow dot on the bottom line: not detected (n.d.);
 * the dashed line is the positive cutoff.
 * @throws RangeError as ctAxis
 */
export function renderCtTrend(points: readonly TrendPoint[], options: TrendOptions): string {
  const width = options.width ?? 230;
  const height = options.height ?? 130;
  const left = 34;
  const right = 10;
  const top = 20;
  const bottom = 30;
  const axis = ctAxis(points.flatMap((point) => (point.ct === null ? [] : [point.ct])), options.cycleLimit);
  const rounds = options.rounds.length > 0 ? options.rounds : points.map((point) => ({ round: point.round, label: point.label }));
  const index = new Map(rounds.map((entry, i) => [entry.round, i]));
  const plotW = width - left - right;
  const plotH = height - top - bottom;
  const xAt = (round: number) => left + (rounds.length <= 1 ? plotW / 2 : ((index.get(round) ?? 0) * plotW) / (rounds.length - 1));
  const yAt = (ct: number) => top + ((ct - axis.top) / (axis.bottom - axis.top)) * plotH;
  const parts: string[] = [];
  parts.push(`<svg xmlns="http://www.w3.org/2000/svg" class="trend" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" data-trend="">`);
  parts.push(`<title>${escapeHtml(options.title)}</title>`);
  parts.push(`<text x="${left}" y="12" font-size="11" font-weight="700" fill="${COLOURS.ink}">${escapeHtml(options.title)}</text>`);
  // Gridlines every 5 cycles, labelled on the left.
  for (let ct = Math.ceil(axis.top / 5) * 5; ct <= axis.bottom; ct += 5) {
    parts.push(`<line x1="${left}" x2="${width - right}" y1="${fmt(yAt(ct))}" y2="${fmt(yAt(ct))}" stroke="#d4d4d4" stroke-width="0.8"/>`);
    parts.push(`<text x="${left - 4}" y="${fmt(yAt(ct))}" text-anchor="end" dominant-baseline="central" font-size="9" fill="${COLOURS.muted}">${ct}</text>`);
  }
  parts.push(`<text x="4" y="${fmt(top + 2)}" font-size="8.5" fill="${COLOURS.muted}" transform="rotate(-90 4 ${fmt(top + 2)})" text-anchor="end" dominant-baseline="hanging">Ct (up = more virus)</text>`);
  if (options.positiveBelow !== null && options.positiveBelow > axis.top && options.positiveBelow < axis.bottom) {
    const y = fmt(yAt(options.positiveBelow));
    parts.push(`<line x1="${left}" x2="${width - right}" y1="${y}" y2="${y}" stroke="#000000" stroke-width="1" stroke-dasharray="4 3" data-cutoff=""/>`);
  }
  parts.push(`<line x1="${left}" x2="${width - right}" y1="${fmt(yAt(axis.bottom))}" y2="${fmt(yAt(axis.bottom))}" stroke="#6b7280" stroke-width="1"/>`);
  const step = Math.max(1, Math.ceil(rounds.length / 7));
  rounds.forEach((entry, i) => {
    if (i % step !== 0 && i !== rounds.length - 1) return;
    parts.push(`<text x="${fmt(xAt(entry.round))}" y="${height - bottom + 13}" text-anchor="middle" font-size="9" fill="${COLOURS.muted}">${escapeHtml(entry.label)}</text>`);
  });
  parts.push(`<text x="${width - right}" y="${height - 3}" text-anchor="end" font-size="8.5" fill="${COLOURS.muted}">bottom line: not detected (n.d.)</text>`);
  const detected = points.filter((point) => point.ct !== null);
  if (detected.length >= 2) {
    const path = detected.map((point, i) => `${i === 0 ? 'M' : 'L'}${fmt(xAt(point.round))},${fmt(yAt(point.ct!))}`).join(' ');
    parts.push(`<path d="${path}" fill="none" stroke="${COLOURS.ink}" stroke-width="1.6"/>`);
  }
  for (const point of points) {
    const x = fmt(xAt(point.round));
    if (point.ct === null) {
      parts.push(`<circle cx="${x}" cy="${fmt(yAt(axis.bottom))}" r="3.2" fill="#ffffff" stroke="${COLOURS.ink}" stroke-width="1.3" data-point="nd"><title>${escapeHtml(`${point.label}: not detected`)}</title></circle>`);
    } else {
      parts.push(`<circle cx="${x}" cy="${fmt(yAt(point.ct))}" r="3.4" fill="${COLOURS.ink}" data-point="ct"><title>${escapeHtml(`${point.label}: Ct ${point.ct} (${point.resultClass})`)}</title></circle>`);
      parts.push(`<text x="${x}" y="${fmt(yAt(point.ct) - 6)}" text-anchor="middle" font-size="8.5" fill="${COLOURS.ink}">${fmt(point.ct)}</text>`);
    }
  }
  parts.push('</svg>');
  return parts.join('');
}
