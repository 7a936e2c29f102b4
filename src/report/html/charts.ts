/**
 * Ct trend of one pen across rounds as a small plain-SVG line chart. The Ct axis runs downward
 * in value (low Ct at the top) so that "up" means more virus, and the axis says so in words.
 * Each point is drawn with the reading of the lab that reported it: not detected sits on the
 * cycle-limit line, an invalid result (a failed control: no reading at all) is a cross on a strip
 * of its own below the axis, never on the not-detected line, and each lab's positive cutoff is a
 * dashed line with its value.
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

/** A positive cutoff drawn as a dashed line, with what it is (e.g. "36, Northfield"). */
export interface TrendCutoff {
  value: number;
  label: string;
}

export interface TrendOptions {
  title: string;
  /** The cycle limit of the runs shown (the bottom of the axis: not detected); the highest when labs differ. */
  cycleLimit: number;
  /** The positive cutoffs of the labs that reported the points, one dashed line each. */
  cutoffs: readonly TrendCutoff[];
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
  if (!Number.isFinite(cycleLimit) || cycleLimit <= 0)
    throw new RangeError(`\`cycleLimit\` must be a number > 0, got ${cycleLimit}`);
  for (const ct of cts)
    if (!Number.isFinite(ct) || ct <= 0) throw new RangeError(`\`ct\` must be a number > 0, got ${ct}`);
  const lowest = Math.min(20, ...cts);
  const top = Math.max(0, Math.floor(lowest / 5) * 5);
  return { top, bottom: Math.max(cycleLimit, ...cts) };
}

/** The mark of a point: a Ct, not detected, or invalid (whatever Ct the lab wrote beside a failed control). */
export function pointKind(point: Pick<TrendPoint, 'ct' | 'resultClass'>): 'ct' | 'nd' | 'invalid' {
  if (point.resultClass === 'invalid') return 'invalid';
  return point.ct === null ? 'nd' : 'ct';
}

/** The path of a cross (two strokes): a shape of its own in greyscale, unlike either dot. */
function cross(cx: number, cy: number, r: number): string {
  return `M${fmt(cx - r)},${fmt(cy - r)} L${fmt(cx + r)},${fmt(cy + r)} M${fmt(cx - r)},${fmt(cy + r)} L${fmt(cx + r)},${fmt(cy - r)}`;
}

/**
 * The frame both trend charts share: margins (room on the left for the invalid strip's label, on
 * the right for the cutoff values), the round positions on the x axis, and the SVG head.
 */
interface TrendFrame {
  width: number;
  height: number;
  left: number;
  right: number;
  top: number;
  plotH: number;
  xAt: (round: number) => number;
  head: (extraAttributes: string) => string[];
  /** The round labels under the axis (at most about seven, the last always). */
  roundLabels: () => string[];
  /** A dashed line per lab cutoff with its value on the right; close lines take turns above and below, so values never overprint. */
  cutoffLines: (
    shown: readonly { value: number; label: string }[],
    yAt: (value: number) => number,
    valueText: (value: number) => string,
  ) => string[];
}

function trendFrame(
  points: readonly { round: number; label: string }[],
  options: { width?: number; height?: number; rounds: readonly { round: number; label: string }[]; title: string },
  layout: { anyInvalid: boolean; rightWithCutoffs: number | null },
): TrendFrame {
  const width = options.width ?? 230;
  // The invalid strip needs room of its own below the lowest line.
  const height = (options.height ?? 130) + (layout.anyInvalid ? 12 : 0);
  const left = layout.anyInvalid ? 40 : 34;
  const right = layout.rightWithCutoffs ?? 10;
  const top = 20;
  const bottom = 30 + (layout.anyInvalid ? 12 : 0);
  const rounds =
    options.rounds.length > 0 ? options.rounds : points.map((point) => ({ round: point.round, label: point.label }));
  const index = new Map(rounds.map((entry, i) => [entry.round, i]));
  const plotW = width - left - right;
  const plotH = height - top - bottom;
  const xAt = (round: number) =>
    left + (rounds.length <= 1 ? plotW / 2 : ((index.get(round) ?? 0) * plotW) / (rounds.length - 1));
  const head = (extraAttributes: string) => [
    `<svg xmlns="http://www.w3.org/2000/svg" class="trend" viewBox="0 0 ${width} ${height}" width="${width}" height="${height}" role="img" data-trend=""${extraAttributes}>`,
    `<title>${escapeHtml(options.title)}</title>`,
    `<text x="${left}" y="12" font-size="11" font-weight="700" fill="${COLOURS.ink}">${escapeHtml(options.title)}</text>`,
  ];
  const roundLabels = () => {
    const step = Math.max(1, Math.ceil(rounds.length / 7));
    const labelsY = height - bottom + 13 + (layout.anyInvalid ? 12 : 0);
    return rounds
      .filter((_, i) => i % step === 0 || i === rounds.length - 1)
      .map(
        (entry) =>
          `<text x="${fmt(xAt(entry.round))}" y="${labelsY}" text-anchor="middle" font-size="9" fill="${COLOURS.muted}">${escapeHtml(entry.label)}</text>`,
      );
  };
  const cutoffLines = (
    shown: readonly { value: number; label: string }[],
    yAt: (value: number) => number,
    valueText: (value: number) => string,
  ) =>
    shown.flatMap((cutoff, i) => {
      const y = yAt(cutoff.value);
      const below = i % 2 === 1 && Math.abs(y - yAt(shown[i - 1]!.value)) < 10;
      return [
        `<line x1="${left}" x2="${width - right}" y1="${fmt(y)}" y2="${fmt(y)}" stroke="#000000" stroke-width="1" stroke-dasharray="4 3" data-cutoff="${valueText(cutoff.value)}"><title>${escapeHtml(`positive cutoff ${cutoff.label}`)}</title></line>`,
        `<text x="${width - right + 3}" y="${fmt(below ? y + 3 + 7 : y + 3)}" font-size="8" fill="${COLOURS.ink}">${escapeHtml(valueText(cutoff.value))}</text>`,
      ];
    });
  return { width, height, left, right, top, plotH, xAt, head, roundLabels, cutoffLines };
}

/**
 * Renders a Ct trend chart (line through detected Ct values, rounds on the x axis, Ct inverted
 * on the y axis). Filled dot: detected; hollow dot on the bottom line: not detected (n.d.);
 * cross on the strip below: invalid (retest); dashed lines: the labs' positive cutoffs.
 * @throws RangeError as ctAxis
 */
export function renderCtTrend(points: readonly TrendPoint[], options: TrendOptions): string {
  const anyInvalid = points.some((point) => pointKind(point) === 'invalid');
  const detected = points.filter((point) => pointKind(point) === 'ct');
  const axis = ctAxis(
    detected.map((point) => point.ct!),
    options.cycleLimit,
  );
  const shown = [...options.cutoffs]
    .filter((cutoff) => cutoff.value > axis.top && cutoff.value < axis.bottom)
    .sort((a, b) => a.value - b.value);
  const { width, height, left, right, top, plotH, xAt, head, roundLabels, cutoffLines } = trendFrame(points, options, {
    anyInvalid,
    rightWithCutoffs: shown.length > 0 ? 22 : null,
  });
  const yAt = (ct: number) => top + ((ct - axis.top) / (axis.bottom - axis.top)) * plotH;
  const invalidY = yAt(axis.bottom) + 11;
  const parts: string[] = head('');
  // Gridlines every 5 cycles, labelled on the left.
  for (let ct = Math.ceil(axis.top / 5) * 5; ct <= axis.bottom; ct += 5) {
    parts.push(
      `<line x1="${left}" x2="${width - right}" y1="${fmt(yAt(ct))}" y2="${fmt(yAt(ct))}" stroke="#d4d4d4" stroke-width="0.8"/>`,
    );
    parts.push(
      `<text x="${left - 4}" y="${fmt(yAt(ct))}" text-anchor="end" dominant-baseline="central" font-size="9" fill="${COLOURS.muted}">${ct}</text>`,
    );
  }
  parts.push(
    `<text x="4" y="${fmt(top + 2)}" font-size="8.5" fill="${COLOURS.muted}" transform="rotate(-90 4 ${fmt(top + 2)})" text-anchor="end" dominant-baseline="hanging">Ct (up = more virus)</text>`,
  );
  parts.push(...cutoffLines(shown, yAt, fmt));
  parts.push(
    `<line x1="${left}" x2="${width - right}" y1="${fmt(yAt(axis.bottom))}" y2="${fmt(yAt(axis.bottom))}" stroke="#6b7280" stroke-width="1"/>`,
  );
  if (anyInvalid) {
    parts.push(
      `<text x="${left - 7}" y="${fmt(invalidY)}" text-anchor="end" dominant-baseline="central" font-size="8.5" fill="${COLOURS.muted}">invalid</text>`,
    );
  }
  parts.push(...roundLabels());
  parts.push(
    `<text x="${width - right}" y="${height - 3}" text-anchor="end" font-size="8.5" fill="${COLOURS.muted}">bottom line: not detected (n.d.)${anyInvalid ? '; \u00d7 invalid' : ''}</text>`,
  );
  if (detected.length >= 2) {
    const path = detected
      .map((point, i) => `${i === 0 ? 'M' : 'L'}${fmt(xAt(point.round))},${fmt(yAt(point.ct!))}`)
      .join(' ');
    parts.push(`<path d="${path}" fill="none" stroke="${COLOURS.ink}" stroke-width="1.6"/>`);
  }
  for (const point of points) {
    const x = xAt(point.round);
    switch (pointKind(point)) {
      case 'invalid':
        parts.push(
          `<path d="${cross(x, invalidY, 3.6)}" stroke="${COLOURS.ink}" stroke-width="2" fill="none" data-point="invalid"><title>${escapeHtml(`${point.label}: invalid, retest (no reading)`)}</title></path>`,
        );
        break;
      case 'nd':
        parts.push(
          `<circle cx="${fmt(x)}" cy="${fmt(yAt(axis.bottom))}" r="3.2" fill="#ffffff" stroke="${COLOURS.ink}" stroke-width="1.3" data-point="nd"><title>${escapeHtml(`${point.label}: not detected`)}</title></circle>`,
        );
        break;
      case 'ct':
        parts.push(
          `<circle cx="${fmt(x)}" cy="${fmt(yAt(point.ct!))}" r="3.4" fill="${COLOURS.ink}" data-point="ct"><title>${escapeHtml(`${point.label}: Ct ${point.ct} (${point.resultClass})`)}</title></circle>`,
        );
        parts.push(
          `<text x="${fmt(x)}" y="${fmt(yAt(point.ct!) - 6)}" text-anchor="middle" font-size="8.5" fill="${COLOURS.ink}">${fmt(point.ct!)}</text>`,
        );
        break;
    }
  }
  parts.push('</svg>');
  return parts.join('');
}

/**
 * The legend of the trend charts: one entry per mark, the same shapes as in the charts.
 * @param heading leading text (already escaped HTML)
 * @param cutoffs what the dashed lines are, e.g. "36" or "36 (lab A); 37 (lab B)" (already escaped HTML)
 */
export function trendLegend(heading = '', cutoffs = ''): string {
  const icon = (inner: string) => `<svg width="22" height="14" viewBox="0 0 22 14" aria-hidden="true">${inner}</svg>`;
  return (
    `<div class="legend" data-trend-legend="">${heading ? `<span class="item">${heading}</span>` : ''}` +
    `<span class="item">${icon(`<circle cx="11" cy="7" r="3.4" fill="${COLOURS.ink}"/>`)}Ct</span>` +
    `<span class="item">${icon(`<line x1="1" x2="21" y1="7" y2="7" stroke="#6b7280" stroke-width="1"/><circle cx="11" cy="7" r="3.2" fill="#ffffff" stroke="${COLOURS.ink}" stroke-width="1.3"/>`)}not detected</span>` +
    `<span class="item">${icon(`<path d="${cross(11, 7, 3.6)}" stroke="${COLOURS.ink}" stroke-width="2" fill="none"/>`)}invalid (retest)</span>` +
    `<span class="item">${icon(`<line x1="1" x2="21" y1="7" y2="7" stroke="#000000" stroke-width="1" stroke-dasharray="4 3"/>`)}the lab\u2019s positive cutoff${cutoffs ? `, ${cutoffs}` : ''}</span>` +
    `</div>`
  );
}

/** One point of an S/P trend: the S/P ratio (null only when the result is invalid). */
export interface SpTrendPoint {
  round: number;
  label: string;
  sp: number | null;
  resultClass: string;
}

export interface SpTrendOptions {
  title: string;
  /** The positive S/P cutoffs of the labs that reported the points, one dashed line each. */
  cutoffs: readonly TrendCutoff[];
  rounds: readonly { round: number; label: string }[];
  width?: number;
  height?: number;
}

/**
 * The y axis of an S/P trend: from 0 (or the lowest S/P, rounded down to 0.5) up to the highest
 * S/P or cutoff shown, rounded up to 0.5 and at least 1; higher is more antibody, at the top.
 * @param sps S/P ratios (finite)
 * @param cutoffs positive cutoffs drawn (finite, > 0)
 * @throws RangeError for a value that is not finite, or a cutoff not > 0
 */
export function spAxis(sps: readonly number[], cutoffs: readonly number[]): { bottom: number; top: number } {
  for (const sp of sps) if (!Number.isFinite(sp)) throw new RangeError(`\`sp\` must be a finite number, got ${sp}`);
  for (const cutoff of cutoffs)
    if (!Number.isFinite(cutoff) || cutoff <= 0) throw new RangeError(`\`cutoff\` must be a number > 0, got ${cutoff}`);
  const bottom = Math.min(0, Math.floor(Math.min(0, ...sps) * 2) / 2);
  const top = Math.max(1, Math.ceil(Math.max(...sps, ...cutoffs, 0) * 2) / 2);
  return { bottom, top };
}

/**
 * Renders an S/P trend chart of an antibody assay: rounds on the x axis, the S/P ratio on the y
 * axis with more antibody at the top (the axis says so), a line through the S/P values, each
 * lab's positive cutoff as a dashed line, and an invalid result as a cross on a strip of its own
 * below the axis. There is no "not detected" in an S/P: a low S/P is a point like any other.
 * @throws RangeError as spAxis
 */
export function renderSpTrend(points: readonly SpTrendPoint[], options: SpTrendOptions): string {
  const valued = points.filter((point) => point.resultClass !== 'invalid' && point.sp !== null);
  const anyInvalid = valued.length < points.length;
  const axis = spAxis(
    valued.map((point) => point.sp!),
    options.cutoffs.map((cutoff) => cutoff.value),
  );
  const shown = [...options.cutoffs].sort((a, b) => a.value - b.value);
  const { width, left, right, top, plotH, xAt, head, roundLabels, cutoffLines } = trendFrame(points, options, {
    anyInvalid,
    rightWithCutoffs: shown.length > 0 ? 26 : null,
  });
  const yAt = (sp: number) => top + ((axis.top - sp) / (axis.top - axis.bottom)) * plotH;
  const invalidY = yAt(axis.bottom) + 11;
  const spLabel = (sp: number) => String(Math.round(sp * 100) / 100);
  const parts: string[] = head(' data-measure="sp-ratio"');
  const grid = axis.top - axis.bottom <= 3 ? 0.5 : 1;
  for (let k = Math.ceil(axis.bottom / grid); k * grid <= axis.top + 1e-9; k++) {
    const value = k * grid;
    parts.push(
      `<line x1="${left}" x2="${width - right}" y1="${fmt(yAt(value))}" y2="${fmt(yAt(value))}" stroke="#d4d4d4" stroke-width="0.8"/>`,
    );
    parts.push(
      `<text x="${left - 4}" y="${fmt(yAt(value))}" text-anchor="end" dominant-baseline="central" font-size="9" fill="${COLOURS.muted}">${spLabel(value)}</text>`,
    );
  }
  parts.push(
    `<text x="4" y="${fmt(top + 2)}" font-size="8.5" fill="${COLOURS.muted}" transform="rotate(-90 4 ${fmt(top + 2)})" text-anchor="end" dominant-baseline="hanging">S/P (up = more antibody)</text>`,
  );
  parts.push(...cutoffLines(shown, yAt, spLabel));
  parts.push(
    `<line x1="${left}" x2="${width - right}" y1="${fmt(yAt(axis.bottom))}" y2="${fmt(yAt(axis.bottom))}" stroke="#6b7280" stroke-width="1"/>`,
  );
  if (anyInvalid)
    parts.push(
      `<text x="${left - 7}" y="${fmt(invalidY)}" text-anchor="end" dominant-baseline="central" font-size="8.5" fill="${COLOURS.muted}">invalid</text>`,
    );
  parts.push(...roundLabels());
  if (valued.length >= 2) {
    const path = valued
      .map((point, i) => `${i === 0 ? 'M' : 'L'}${fmt(xAt(point.round))},${fmt(yAt(point.sp!))}`)
      .join(' ');
    parts.push(`<path d="${path}" fill="none" stroke="${COLOURS.ink}" stroke-width="1.6"/>`);
  }
  for (const point of points) {
    const x = xAt(point.round);
    if (point.resultClass === 'invalid' || point.sp === null) {
      parts.push(
        `<path d="${cross(x, invalidY, 3.6)}" stroke="${COLOURS.ink}" stroke-width="2" fill="none" data-point="invalid"><title>${escapeHtml(`${point.label}: invalid, retest (no reading)`)}</title></path>`,
      );
      continue;
    }
    const y = yAt(point.sp);
    parts.push(
      `<circle cx="${fmt(x)}" cy="${fmt(y)}" r="3.4" fill="${COLOURS.ink}" data-point="sp"><title>${escapeHtml(`${point.label}: S/P ${point.sp} (${point.resultClass})`)}</title></circle>`,
    );
    parts.push(
      `<text x="${fmt(x)}" y="${fmt(y - 6)}" text-anchor="middle" font-size="8.5" fill="${COLOURS.ink}">${spLabel(point.sp)}</text>`,
    );
  }
  parts.push('</svg>');
  return parts.join('');
}

/**
 * The legend of the S/P trend charts: the same shapes as in the charts.
 * @param heading leading text (already escaped HTML)
 * @param cutoffs what the dashed lines are (already escaped HTML)
 */
export function spTrendLegend(heading = '', cutoffs = ''): string {
  const icon = (inner: string) => `<svg width="22" height="14" viewBox="0 0 22 14" aria-hidden="true">${inner}</svg>`;
  return (
    `<div class="legend" data-trend-legend="" data-measure="sp-ratio">${heading ? `<span class="item">${heading}</span>` : ''}` +
    `<span class="item">${icon(`<circle cx="11" cy="7" r="3.4" fill="${COLOURS.ink}"/>`)}S/P ratio (higher = more antibody)</span>` +
    `<span class="item">${icon(`<path d="${cross(11, 7, 3.6)}" stroke="${COLOURS.ink}" stroke-width="2" fill="none"/>`)}invalid (retest)</span>` +
    `<span class="item">${icon(`<line x1="1" x2="21" y1="7" y2="7" stroke="#000000" stroke-width="1" stroke-dasharray="4 3"/>`)}the lab\u2019s positive cutoff (positive at or above)${cutoffs ? `, ${cutoffs}` : ''}</span>` +
    `</div>`
  );
}
