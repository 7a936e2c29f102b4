/**
 * Tube labels for the next round: one label per rope, in the rope sheet's walking order, with
 * the sample ID as text and as a Code 128 barcode, the barn, pen, checklist line and due date.
 * Laid out for a common sheet of self-adhesive address labels, one file per paper size, printed
 * at 100 % with no margins added by the browser. A label larger than a tube is wrapped round it.
 */
import type { NextRoundPlan } from '../../analysis/nextRound.js';
import { code128Svg } from './barcode.js';
import { escapeHtml } from './escape.js';
import { cautionsBlock, noticesBlock } from './page.js';

export interface LabelLayout {
  id: 'letter' | 'a4';
  /** The page's file name beside next-round.html. */
  file: string;
  /** Paper and label sheet as a person names it. */
  name: string;
  /** The link text on the rope sheet. */
  link: string;
  /** CSS page size keyword. */
  page: 'letter' | 'A4';
  unit: 'in' | 'mm';
  paperWidth: number;
  paperHeight: number;
  columns: number;
  rows: number;
  labelWidth: number;
  labelHeight: number;
  /** Distance from the paper's top edge to the first row's top edge. */
  top: number;
  /** Distance from the paper's left edge to the first column's left edge. */
  left: number;
  /** From one column's left edge to the next one's. */
  pitchX: number;
  /** From one row's top edge to the next one's. */
  pitchY: number;
  barcodeHeightMm: number;
}

/**
 * The 30-up address-label sheet on US Letter: 3 columns x 10 rows of 1 x 2 5/8 in labels, 1/2 in
 * top margin, 3/16 in side margins, 1/8 in between columns, no gap between rows (8.5 in =
 * 2 x 3/16 + 3 x 2 5/8 + 2 x 1/8; 11 in = 2 x 1/2 + 10 x 1). Common practice, no source; the
 * dimensions from memory.
 */
export const LETTER_30: LabelLayout = {
  id: 'letter',
  file: 'next-round-labels-letter.html',
  link: 'Tube labels (US Letter, 3 \u00d7 10)',
  name: 'US Letter, 30 labels of 1 \u00d7 2 5/8 in (3 \u00d7 10)',
  page: 'letter',
  unit: 'in',
  paperWidth: 8.5,
  paperHeight: 11,
  columns: 3,
  rows: 10,
  labelWidth: 2.625,
  labelHeight: 1,
  top: 0.5,
  left: 0.1875,
  pitchX: 2.75,
  pitchY: 1,
  barcodeHeightMm: 7,
};

/**
 * The 24-up label sheet on A4: 3 columns x 8 rows of 63.5 x 33.9 mm labels, 12.9 mm top margin,
 * 7.25 mm side margins, 2.5 mm between columns, no gap between rows (210 = 2 x 7.25 + 3 x 63.5 +
 * 2 x 2.5; 297 = 2 x 12.9 + 8 x 33.9). Common practice, no source; the dimensions from memory.
 */
export const A4_24: LabelLayout = {
  id: 'a4',
  file: 'next-round-labels-a4.html',
  link: 'Tube labels (A4, 3 \u00d7 8)',
  name: 'A4, 24 labels of 63.5 \u00d7 33.9 mm (3 \u00d7 8)',
  page: 'A4',
  unit: 'mm',
  paperWidth: 210,
  paperHeight: 297,
  columns: 3,
  rows: 8,
  labelWidth: 63.5,
  labelHeight: 33.9,
  top: 12.9,
  left: 7.25,
  pitchX: 66,
  pitchY: 33.9,
  barcodeHeightMm: 9,
};

export const LABEL_LAYOUTS: readonly LabelLayout[] = [LETTER_30, A4_24];

function css(layout: LabelLayout): string {
  const u = (value: number) => `${value}${layout.unit}`;
  return (
    `*{box-sizing:border-box}` +
    `html{font-family:system-ui,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;color:#000;background:#e5e7eb}` +
    `body{margin:0}` +
    `.screen-only{max-width:${u(layout.paperWidth)};margin:0 auto;padding:12px 16px;background:#fff;font-size:14px}` +
    `.screen-only .notice{border:3px solid #7a1f00;padding:6px 10px;margin:6px 0;font-weight:700}` +
    `.sheet{position:relative;width:${u(layout.paperWidth)};height:${u(layout.paperHeight)};margin:12px auto;background:#fff;overflow:hidden}` +
    `.label{position:absolute;width:${u(layout.labelWidth)};height:${u(layout.labelHeight)};padding:1.2mm 2mm;overflow:hidden;display:flex;flex-direction:column;align-items:center;justify-content:center;gap:0.6mm;text-align:center}` +
    `.label .id{font-size:11pt;font-weight:700;letter-spacing:.04em;line-height:1}` +
    `.label .where{font-size:7pt;line-height:1.1;white-space:nowrap;max-width:100%;overflow:hidden;text-overflow:ellipsis}` +
    `.label svg.barcode{display:block}` +
    `@media screen{.label{outline:1px dashed #9ca3af}}` +
    `@media print{@page{size:${layout.page};margin:0}html{background:none}.screen-only{display:none}.sheet{margin:0;break-after:page;page-break-after:always}.sheet:last-child{break-after:auto;page-break-after:auto}}`
  );
}

/**
 * The label page for one layout: sheets of `columns x rows` labels, each label absolutely placed
 * at its template position. On screen it says how to print and carries the notices and cautions;
 * in print only the labels remain.
 */
export function renderLabelSheetPage(
  plan: NextRoundPlan,
  layout: LabelLayout,
  notices: readonly string[] = [],
): string {
  const perSheet = layout.columns * layout.rows;
  const u = (value: number) => `${Math.round(value * 10000) / 10000}${layout.unit}`;
  const labels = plan.ropes.map((rope, index) => {
    const slot = index % perSheet;
    const column = slot % layout.columns;
    const row = Math.floor(slot / layout.columns);
    return (
      `<div class="label" data-label="${escapeHtml(rope.sampleId)}" style="left:${u(layout.left + column * layout.pitchX)};top:${u(layout.top + row * layout.pitchY)}">` +
      `<span class="id">${escapeHtml(rope.sampleId)}</span>${code128Svg(rope.sampleId, { heightMm: layout.barcodeHeightMm })}` +
      `<span class="where">${escapeHtml(rope.barnId)} \u00b7 pen ${escapeHtml(rope.penId)} \u00b7 #${index + 1} \u00b7 by ${escapeHtml(rope.dueDate)}</span>` +
      `<span class="where site">${escapeHtml(plan.site.name)}</span></div>`
    );
  });
  const sheets: string[] = [];
  for (let start = 0; start < labels.length; start += perSheet)
    sheets.push(`<section class="sheet">${labels.slice(start, start + perSheet).join('')}</section>`);
  const title = `${plan.site.name}: tube labels for round ${plan.round}`;
  return (
    `<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n<meta name="viewport" content="width=device-width, initial-scale=1">\n` +
    `<title>${escapeHtml(title)}</title>\n<style>${css(layout)}</style>\n</head>\n<body>\n` +
    `<div class="screen-only"><h1>${escapeHtml(title)}</h1>` +
    `<p>For label sheets of the layout <strong>${escapeHtml(layout.name)}</strong>. Print at 100 % (actual size, not \u201cfit to page\u201d), with no margins added; ` +
    `print one page on plain paper first and hold it against a label sheet. Labels follow the rope sheet's walking order (#).</p>` +
    `<p><a href="next-round.html">Back to the rope sheet</a></p>${noticesBlock(notices)}${cautionsBlock()}</div>\n` +
    `${sheets.length > 0 ? sheets.join('\n') : '<p class="screen-only">No ropes planned: no labels.</p>'}\n</body>\n</html>\n`
  );
}
