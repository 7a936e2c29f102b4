/**
 * One pen of a barn map: its fill (load or S/P step, hatching for empty and out-of-use pens),
 * outline, tooltip, label, and the result symbol or planned-rope shape with its checklist number.
 */
import { isInUse, type PenStatus } from '../../domain/layout.js';
import type { PlanReason } from '../../plan/monitoring.js';
import { escapeHtml } from './escape.js';
import { COLOURS, LOAD_RAMP, loadStep } from './palette.js';

/** What a map shows for one pen. Pens without a mark are drawn as not roped. */
export interface PenMark {
  resultClass: 'positive' | 'suspect' | 'negative' | 'invalid' | 'missing';
  /** Load score max(0, C_max - Ct), cycles. */
  load: number;
  /** Ramp step to fill with instead of the load's (an S/P result: spStep); the tooltip then names no load. */
  shade?: number;
  /** Positive now and never before (a small corner flag). */
  newPositive?: boolean;
  /** Text for the pen's tooltip. */
  note?: string;
}

/** A planned rope on the rope sheet. */
export interface PlannedMark {
  reason: PlanReason;
  /** 1-based line of the checklist. */
  order: number;
}

const SYMBOL: Readonly<Record<PenMark['resultClass'], string>> = {
  positive: '+',
  suspect: '?',
  negative: '\u2212',
  invalid: '\u00d7',
  missing: 'M',
};
/** A coordinate or size in the SVG, to one decimal. */
export const fmt = (value: number) => String(Math.round(value * 10) / 10);

function plannedSymbol(mark: PlannedMark, cx: number, cy: number, r: number): string {
  const s = fmt;
  switch (mark.reason) {
    case 'routine':
      return `<circle cx="${s(cx)}" cy="${s(cy)}" r="${s(r)}" fill="#ffffff" stroke="#000000" stroke-width="2"/>`;
    case 'follow-up':
      return `<polygon points="${s(cx)},${s(cy - r * 1.2)} ${s(cx + r * 1.15)},${s(cy + r * 0.85)} ${s(cx - r * 1.15)},${s(cy + r * 0.85)}" fill="#ffffff" stroke="#000000" stroke-width="2.4"/>`;
    case 'retest':
      return `<rect x="${s(cx - r)}" y="${s(cy - r)}" width="${s(2 * r)}" height="${s(2 * r)}" fill="#ffffff" stroke="#000000" stroke-width="2.4" transform="rotate(45 ${s(cx)} ${s(cy)})"/>`;
    case 're-rope':
      return `<rect x="${s(cx - r * 0.9)}" y="${s(cy - r * 0.9)}" width="${s(1.8 * r)}" height="${s(1.8 * r)}" fill="#ffffff" stroke="#000000" stroke-width="3"/>`;
    case 'tracking':
      return `<circle cx="${s(cx)}" cy="${s(cy)}" r="${s(r)}" fill="#ffffff" stroke="#000000" stroke-width="2" stroke-dasharray="3 2"/>`;
  }
}

/** Where a pen sits on the map, in pixels, and its status (barnMap's PenRect). */
interface PenBox {
  id: string;
  x: number;
  y: number;
  width: number;
  height: number;
  status: PenStatus;
}

/**
 * Fill and ink of a pen: white when not roped, hatched when empty or out of use, the ramp step of
 * its load or S/P. A hatched fill names the map's own pattern: `pattern` then says which, and
 * `fill` is what follows the map's id prefix in url(#…).
 */
function penFill(pen: PenBox, result: PenMark | undefined): { fill: string; ink: string; pattern: boolean } {
  if (result && result.resultClass !== 'missing') {
    const step = LOAD_RAMP[result.shade ?? loadStep(result.load)];
    if (step === undefined)
      throw new RangeError(
        `\`shade\` of pen ${pen.id} must be an integer in [0, ${LOAD_RAMP.length - 1}], got ${result.shade}`,
      );
    return { fill: step.fill, ink: step.ink, pattern: false };
  }
  if (pen.status === 'empty') return { fill: '-empty)', ink: COLOURS.ink, pattern: true };
  if (pen.status === 'out-of-use') return { fill: '-out)', ink: COLOURS.ink, pattern: true };
  return { fill: '#ffffff', ink: COLOURS.ink, pattern: false };
}

/** The pen's tooltip: id, status, result and load, the mark's note, the planned rope (the non-empty ones, comma-separated). */
function penTip(pen: PenBox, result: PenMark | undefined, planned: PlannedMark | undefined): string {
  const parts = [pen.id];
  if (!isInUse(pen)) parts.push(pen.status);
  if (result) {
    parts.push(
      `${result.resultClass}${result.load > 0 && result.shade === undefined ? `, load ${fmt(result.load)}` : ''}`,
    );
    parts.push(result.note ?? '');
  }
  if (planned) parts.push(`${planned.reason} rope #${planned.order}`);
  return parts.filter((part) => part !== '').join(', ');
}

/** On the full map: the pen's label, then its result symbol, its planned rope, or "empty" / "out". */
function penLabels(
  pen: PenBox,
  result: PenMark | undefined,
  planned: PlannedMark | undefined,
  ink: string,
  fontSize: number,
): string[] {
  const parts: string[] = [];
  const cx = pen.x + pen.width / 2;
  const statusText = pen.status === 'empty' ? 'empty' : pen.status === 'out-of-use' ? 'out' : '';
  const labelBox =
    statusText !== '' && !result
      ? `<rect x="${fmt(cx - pen.width * 0.42)}" y="${fmt(pen.y + 2)}" width="${fmt(pen.width * 0.84)}" height="${fmt(fontSize + 2)}" fill="#ffffff"/>`
      : '';
  parts.push(labelBox);
  parts.push(
    `<text x="${fmt(cx)}" y="${fmt(pen.y + 3 + fontSize * 0.85)}" text-anchor="middle" font-size="${fmt(fontSize)}" fill="${ink}">${escapeHtml(pen.id)}</text>`,
  );
  if (result) {
    parts.push(
      `<text x="${fmt(cx)}" y="${fmt(pen.y + pen.height * 0.72)}" text-anchor="middle" dominant-baseline="central" font-size="${fmt(fontSize * 1.45)}" font-weight="700" fill="${ink}">${SYMBOL[result.resultClass]}</text>`,
    );
    if (result.newPositive)
      parts.push(
        `<polygon points="${fmt(pen.x + pen.width - 9)},${fmt(pen.y + 3)} ${fmt(pen.x + pen.width - 3)},${fmt(pen.y + 3)} ${fmt(pen.x + pen.width - 3)},${fmt(pen.y + 9)}" fill="#ffffff" stroke="#000000" stroke-width="1"/>`,
      );
  } else if (planned) {
    const cy = pen.y + pen.height * 0.66;
    const r = Math.min(pen.width, pen.height) * 0.24;
    parts.push(plannedSymbol(planned, cx, cy, r));
    // Two-digit numbers sit lower in the triangle, where it is wide enough.
    parts.push(
      `<text x="${fmt(cx)}" y="${fmt(cy + (planned.reason === 'follow-up' ? r * 0.3 : 0))}" text-anchor="middle" dominant-baseline="central" font-size="${fmt(Math.max(7, r * (planned.order >= 10 ? 0.85 : 1.05)))}" font-weight="700" fill="#000000">${planned.order}</text>`,
    );
  } else if (statusText !== '') {
    parts.push(
      `<rect x="${fmt(cx - pen.width * 0.42)}" y="${fmt(pen.y + pen.height * 0.55)}" width="${fmt(pen.width * 0.84)}" height="${fmt(fontSize + 2)}" fill="#ffffff"/>`,
    );
    parts.push(
      `<text x="${fmt(cx)}" y="${fmt(pen.y + pen.height * 0.55 + fontSize * 0.9)}" text-anchor="middle" font-size="${fmt(fontSize * 0.8)}" fill="${COLOURS.ink}">${statusText}</text>`,
    );
  }
  return parts;
}

/**
 * One pen as an SVG group: data attributes, tooltip, the filled rectangle (a heavy outline when
 * positive, dashed when its rope has no result) and, on the full map, its labels; as the text
 * before and after the map's id prefix: one piece, or two when the pen is hatched (its fill
 * names the map's pattern). Joined with the map's prefix they are the pen as the map draws it.
 * @throws RangeError for a shade outside the ramp
 */
export function penPieces(
  pen: PenBox,
  result: PenMark | undefined,
  planned: PlannedMark | undefined,
  view: { full: boolean; fontSize: number },
): string[] {
  const { fill, ink, pattern } = penFill(pen, result);
  const positive = result?.resultClass === 'positive';
  const stroke = positive ? COLOURS.positiveStroke : result ? '#4b5563' : COLOURS.penStroke;
  const strokeWidth = positive ? (view.full ? 3.2 : 2) : result ? 1.2 : 0.8;
  const inset = positive ? strokeWidth / 2 : 0;
  let data = `data-pen="${escapeHtml(pen.id)}" data-status="${pen.status}"`;
  if (result) data += ` data-result="${result.resultClass}"`;
  if (positive) data += ' data-positive=""';
  if (planned) data += ` data-planned="${planned.reason}"`;
  const head =
    `<g class="pen" ${data}><title>${escapeHtml(penTip(pen, result, planned))}</title>` +
    `<rect x="${fmt(pen.x + inset)}" y="${fmt(pen.y + inset)}" width="${fmt(pen.width - 2 * inset)}" height="${fmt(pen.height - 2 * inset)}" fill="`;
  const tail =
    `${fill}" stroke="${stroke}" stroke-width="${fmt(strokeWidth)}"${result?.resultClass === 'missing' ? ' stroke-dasharray="3 2"' : ''}/>` +
    (view.full ? penLabels(pen, result, planned, ink, view.fontSize).join('') : '') +
    '</g>';
  return pattern ? [`${head}url(#`, tail] : [head + tail];
}
