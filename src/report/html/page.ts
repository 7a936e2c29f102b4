/**
 * The document shell every page shares: inline CSS (screen and print), the notifiable notices at
 * the top, the cautions at the bottom, map legends and number formatting. No scripts, no network,
 * no external fonts: a page is one file that opens and prints anywhere.
 */
import { CAUTIONS } from '../cautions.js';
import { escapeHtml, safeId } from './escape.js';
import { formatPValue, formatPercent } from '../../util/format.js';
import { COLOURS, LOAD_BAND_CYCLES, LOAD_RAMP, SP_STEP_MULTIPLES } from './palette.js';

export interface PageInput {
  /** The <title>. */
  title: string;
  heading: string;
  /** One line under the heading (already escaped HTML). */
  subheading?: string;
  /** Notifiable notices (plain text). */
  notices: readonly string[];
  /** Links at the top: href relative to the page, plain-text label. */
  nav?: readonly { href: string; label: string }[];
  /** The page's body (already escaped HTML), whole or as its parts in order (joined once, with the page). */
  body: string | readonly string[];
  /** Larger type, for the producer's rope sheet. */
  large?: boolean;
  /** The cautions right after the notices instead of at the end (the rope sheet: printed, they share the first page instead of trailing alone onto a last one). */
  cautionsFirst?: boolean;
  /** The site's herd-status block under the heading (already escaped HTML; see herdStatus.ts). */
  herdStatus?: string;
}

const CSS = `
*{box-sizing:border-box}
html{font-family:system-ui,"Segoe UI",Roboto,"Helvetica Neue",Arial,sans-serif;color:${COLOURS.ink};background:${COLOURS.paper};font-size:15px;line-height:1.4}
body{margin:0 auto;max-width:1060px;padding:18px 22px}
body.large{font-size:18px}
h1{font-size:1.6em;margin:0 0 2px}
h2{font-size:1.25em;margin:22px 0 6px;border-bottom:2px solid ${COLOURS.ink};padding-bottom:2px}
h3{font-size:1.08em;margin:14px 0 4px}
p{margin:4px 0 8px}
a{color:${COLOURS.link}}
.sub{color:${COLOURS.muted};margin:0 0 10px}
nav{margin:0 0 10px;font-size:.92em}
nav a{margin-right:14px}
.notice{border:3px solid ${COLOURS.noticeInk};background:${COLOURS.noticePaper};color:${COLOURS.noticeInk};padding:8px 12px;margin:8px 0;font-weight:700}
.alerts{border-left:6px solid ${COLOURS.alertInk};background:${COLOURS.alertPaper};color:${COLOURS.alertInk};padding:6px 12px;margin:8px 0}
.alerts ul{margin:4px 0;padding-left:20px}
.alerts li{margin:3px 0}
.calm{border-left:6px solid ${COLOURS.okInk};background:${COLOURS.okPaper};color:${COLOURS.okInk};padding:6px 12px;margin:8px 0}
.explain{background:${COLOURS.panel};padding:6px 12px;margin:8px 0}
table{border-collapse:collapse;margin:4px 0 10px;font-size:.93em}
th,td{border:1px solid ${COLOURS.rule};padding:3px 7px;text-align:left;vertical-align:top}
th{background:${COLOURS.panel}}
td.num,th.num{text-align:right;font-variant-numeric:tabular-nums}
.met{color:${COLOURS.okInk};background:${COLOURS.okPaper};font-weight:700}
.below{color:${COLOURS.alertInk};background:${COLOURS.alertPaper};font-weight:700}
.muted{color:${COLOURS.muted}}
.barn{break-inside:avoid;page-break-inside:avoid;margin-bottom:12px}
figure{margin:6px 0 10px}
figcaption{font-size:.88em;color:${COLOURS.muted}}
svg.map{max-width:100%;height:auto;display:block}
.minis{display:flex;flex-wrap:wrap;gap:10px;margin:4px 0}
.minis figure{margin:0;max-width:340px}
.minis svg.map{max-width:none}
.trends{display:flex;flex-wrap:wrap;gap:6px}
.legend{display:flex;flex-wrap:wrap;gap:4px 14px;font-size:.85em;margin:4px 0;align-items:center}
.legend span.item{display:inline-flex;align-items:center;gap:4px}
.legend svg{vertical-align:middle}
.cautions{margin-top:22px;border-top:2px solid ${COLOURS.ink};padding-top:6px;font-size:.88em}
.cautions ul{margin:4px 0;padding-left:20px}
.checklist td,.checklist th{padding:7px 10px}
.checklist td.tick{width:44px}
.checklist-pair{display:flex;gap:8px;align-items:flex-start}
.checklist-pair .checklist{flex:1 1 0;min-width:0;width:auto}
.checklist-pair .checklist td,.checklist-pair .checklist th{white-space:nowrap}
.box{display:inline-block;width:22px;height:22px;border:2px solid ${COLOURS.ink};vertical-align:middle}
.due{font-size:1.35em;font-weight:700;margin:6px 0}
.overdue{border:3px solid ${COLOURS.alertInk};background:${COLOURS.alertPaper};color:${COLOURS.alertInk};padding:6px 12px;font-weight:700}
.stats td:first-child{white-space:nowrap}
.checklist svg.barcode{display:inline-block;vertical-align:middle;margin-left:6px}
.checklist td.sample{white-space:nowrap}
.checklist td.write{min-width:90px}
.checklist td.notes{min-width:170px}
.checklist .barn-row{display:none}
.checklist .barn-row th{background:none;border:none;border-bottom:2px solid ${COLOURS.ink};padding:0 0 2px;font-size:1.05em}
body.large>.cautions{margin-top:8px}
@media print{
  @page{margin:12mm}
  html{font-size:10.5pt}
  body{max-width:none;padding:0}
  body.large{font-size:13pt}
  nav{display:none}
  a{color:${COLOURS.ink};text-decoration:none}
  h2{break-after:avoid;page-break-after:avoid}
  .notice,.alerts,.calm,.overdue{-webkit-print-color-adjust:exact;print-color-adjust:exact}
  .alerts{padding:3px 10px}
  .alerts li .detail{font-size:.9em}
  svg{-webkit-print-color-adjust:exact;print-color-adjust:exact}
  tr{break-inside:avoid;page-break-inside:avoid}
  table{font-size:8.5pt;max-width:100%}
  th,td{padding:2px 4px;overflow-wrap:anywhere}
  .checklist{font-size:11.5pt}
  .checklist td,.checklist th{padding:3px 8px}
  .checklist-pair .checklist{font-size:10.5pt}
  .trends svg.trend{width:168px;height:auto}
  .trends.many svg.trend{width:110px}
  .checklist-pair .checklist td,.checklist-pair .checklist th{padding:2px 3px;overflow-wrap:normal}
  .box{width:16px;height:16px}
  .barn{break-inside:auto;page-break-inside:auto}
  figure,.legend{break-inside:avoid;page-break-inside:avoid}
  .sheet-barn+.sheet-barn{break-before:page;page-break-before:always}
  .barn-top{break-inside:avoid;page-break-inside:avoid;break-after:avoid;page-break-after:avoid}
  .sheet-barn svg.map{max-height:95mm;width:auto;margin:0 auto}
  .checklist .barn-row{display:table-row}
  .checklist{width:100%}
  .checklist td.write{width:20mm;min-width:20mm}
  .checklist td.initials{width:14mm;min-width:14mm}
  .checklist td.notes,.checklist th.notes{width:30%}
  .sheet-barn .checklist{font-size:10.5pt}
  .sheet-barn .checklist td,.sheet-barn .checklist th{padding:2px 5px;vertical-align:middle}
  body.large>.cautions{font-size:9pt}
  .checklist td,.checklist th{overflow-wrap:normal}
  .checklist td{white-space:nowrap}
}
`;

/** The cautions as a block (always visible, also in print). */
export function cautionsBlock(): string {
  return `<section class="cautions" data-cautions=""><strong>Please note</strong><ul>${CAUTIONS.map((text) => `<li>${escapeHtml(text)}</li>`).join('')}</ul></section>`;
}

/** The notifiable notices, one prominent box each. */
export function noticesBlock(notices: readonly string[]): string {
  return notices
    .map((text) => `<div class="notice" role="alert" data-notifiable="">${escapeHtml(text)}</div>`)
    .join('');
}

/**
 * A whole HTML document: shell, CSS, notices first, the body, the cautions last. The page is
 * joined once from its parts, so a body given as parts is copied once, into the page.
 */
export function renderPage(input: PageInput): string {
  const nav =
    input.nav && input.nav.length > 0
      ? `<nav>${input.nav.map((link) => `<a href="${escapeHtml(link.href)}">${escapeHtml(link.label)}</a>`).join('')}</nav>`
      : '';
  const parts = [
    `<!DOCTYPE html>\n<html lang="en">\n<head>\n<meta charset="utf-8">\n<meta name="viewport" content="width=device-width, initial-scale=1">\n` +
      `<title>${escapeHtml(input.title)}</title>\n<style>${CSS}</style>\n</head>\n<body${input.large ? ' class="large"' : ''}>\n` +
      `${nav}<header><h1>${escapeHtml(input.heading)}</h1>${input.subheading ? `<p class="sub">${input.subheading}</p>` : ''}</header>\n` +
      `${input.herdStatus ?? ''}${noticesBlock(input.notices)}\n${input.cautionsFirst ? `${cautionsBlock()}\n` : ''}<main>\n`,
  ];
  if (typeof input.body === 'string') parts.push(input.body);
  else for (const part of input.body) parts.push(part);
  parts.push(`\n</main>\n${input.cautionsFirst ? '' : `${cautionsBlock()}\n`}</body>\n</html>\n`);
  return parts.join('');
}

function swatch(fill: string, stroke: string, strokeWidth: number, symbol = '', ink: string = COLOURS.ink): string {
  return (
    `<svg width="20" height="20" viewBox="0 0 20 20" aria-hidden="true"><rect x="1.5" y="1.5" width="17" height="17" fill="${fill}" stroke="${stroke}" stroke-width="${strokeWidth}"/>` +
    (symbol
      ? `<text x="10" y="10.5" text-anchor="middle" dominant-baseline="central" font-size="13" font-weight="700" fill="${ink}">${symbol}</text>`
      : '') +
    `</svg>`
  );
}

const hatch = (id: string, cross: boolean) =>
  `<svg width="20" height="20" viewBox="0 0 20 20" aria-hidden="true"><defs><pattern id="${id}" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)"><rect width="6" height="6" fill="#ffffff"/><line x1="0" y1="0" x2="0" y2="6" stroke="#6f6f6f" stroke-width="1.6"/>${cross ? '<line x1="0" y1="0" x2="6" y2="0" stroke="#5f5f5f" stroke-width="1.6"/>' : ''}</pattern></defs><rect x="1.5" y="1.5" width="17" height="17" fill="url(#${id})" stroke="${COLOURS.penStroke}"/></svg>`;

/** A cycle limit the shading of a map used, and the labs whose results were read with it. */
export interface LegendLimit {
  cycleLimit: number;
  labs: readonly string[];
}

/** The Ct range a load step stands for at one cycle limit: step k covers loads (5(k-1), 5k]. */
function stepRange(index: number, cycleLimit: number): string {
  const band = LOAD_BAND_CYCLES;
  return index === LOAD_RAMP.length - 1
    ? `&lt; ${cycleLimit - band * (index - 1)}`
    : `${cycleLimit - band * index}\u2013${cycleLimit - band * (index - 1)}`;
}

/**
 * Legend of a results map: the load ramp with the Ct each step stands for at the cycle limit of
 * the lab that reported each rope (one range per limit when labs differ), the symbols, the
 * outlines, hatching and cluster boxes.
 * @param key unique within the page (pattern ids)
 * @param limits the cycle limits C_max of the results drawn, with their labs (a bare number: one limit, no lab named)
 */
export function resultsLegend(rawKey: string, limits: number | readonly LegendLimit[]): string {
  const key = safeId(rawKey);
  const list: readonly LegendLimit[] = typeof limits === 'number' ? [{ cycleLimit: limits, labs: [] }] : limits;
  return legendShades(list) + legendSymbols(key);
}

/** The shade part of a results legend (the same limits give the same text). */
export function legendShades(list: readonly LegendLimit[]): string {
  const ramp = LOAD_RAMP.map((_, index) => {
    const step = LOAD_RAMP[index]!;
    const label =
      index === 0
        ? 'not detected'
        : list.length === 1
          ? `Ct ${stepRange(index, list[0]!.cycleLimit)}`
          : `Ct ${list.map((limit) => `${stepRange(index, limit.cycleLimit)} (limit ${limit.cycleLimit})`).join(' or ')}`;
    return `<span class="item">${swatch(step.fill, '#4b5563', 1.2)}${label}</span>`;
  }).join('');
  // Several limits on one map: say whose each is (one limit is named with the page's cutoffs).
  const named = list.length > 1 ? list.filter((limit) => limit.labs.length > 0) : [];
  const whose =
    named.length === 0
      ? ''
      : ` Cycle limit of the lab that reported each rope: ${named.map((limit) => `${limit.cycleLimit} (${escapeHtml(limit.labs.join(', '))})`).join('; ')}.`;
  const cmax = list.length === 1 ? String(list[0]!.cycleLimit) : 'cycle limit';
  return `<div class="legend" data-legend=""><span class="item"><strong>Shade = load (${cmax} \u2212 Ct), darker = more virus:</strong>${whose}</span>${ramp}</div>`;
}

/** A positive S/P cutoff the shading of a map used, and the labs whose results were read with it. */
export interface SpLegendCutoff {
  positiveAtOrAbove: number;
  labs: readonly string[];
}

/** An S/P value as a legend writes it: at most three decimals, no trailing zeros. */
const spText = (value: number) => String(Math.round(value * 1000) / 1000);

/** The S/P range a ramp step stands for at one positive cutoff c (see spStep). */
function spStepRange(index: number, cutoff: number): string {
  const bounds = SP_STEP_MULTIPLES.map((multiple) => multiple * cutoff);
  if (index === 0) return `&lt; ${spText(bounds[0]!)}`;
  if (index === bounds.length) return `\u2265 ${spText(bounds[index - 1]!)}`;
  return `${spText(bounds[index - 1]!)}\u2013${spText(bounds[index]!)}`;
}

/**
 * Legend of a results map of an antibody assay: the ramp with the S/P range each step stands
 * for at the positive cutoff of the lab that reported each rope (one range per cutoff when labs
 * differ), then the same symbols as a Ct map.
 * @param key unique within the page (pattern ids)
 * @param cutoffs the positive S/P cutoffs of the results drawn, with their labs
 */
export function spResultsLegend(rawKey: string, cutoffs: readonly SpLegendCutoff[]): string {
  return spLegendShades(cutoffs) + legendSymbols(safeId(rawKey));
}

/** The shade part of an S/P results legend (the same cutoffs give the same text). */
export function spLegendShades(list: readonly SpLegendCutoff[]): string {
  const ramp = LOAD_RAMP.map((step, index) => {
    const label =
      list.length === 1
        ? `S/P ${spStepRange(index, list[0]!.positiveAtOrAbove)}`
        : `S/P ${list.map((cutoff) => `${spStepRange(index, cutoff.positiveAtOrAbove)} (cutoff ${spText(cutoff.positiveAtOrAbove)})`).join(' or ')}`;
    return `<span class="item">${swatch(step.fill, '#4b5563', 1.2)}${label}</span>`;
  }).join('');
  const named = list.length > 1 ? list.filter((cutoff) => cutoff.labs.length > 0) : [];
  const whose =
    named.length === 0
      ? ''
      : ` Positive cutoff of the lab that reported each rope: ${named.map((cutoff) => `${spText(cutoff.positiveAtOrAbove)} (${escapeHtml(cutoff.labs.join(', '))})`).join('; ')}.`;
  const cut =
    list.length === 1
      ? `positive at S/P \u2265 ${spText(list[0]!.positiveAtOrAbove)}`
      : 'shades at multiples of each lab\u2019s positive cutoff';
  return `<div class="legend" data-legend="" data-measure="sp-ratio"><span class="item"><strong>Shade = S/P ratio (antibody), darker = more antibody; ${cut}:</strong>${whose}</span>${ramp}</div>`;
}

/** The symbol part of a results legend. */
function legendSymbols(key: string): string {
  return (
    `<div class="legend">` +
    `<span class="item">${swatch(LOAD_RAMP[3]!.fill, '#000000', 3.2, '+', LOAD_RAMP[3]!.ink)}positive (heavy outline)</span>` +
    `<span class="item">${swatch(LOAD_RAMP[1]!.fill, '#4b5563', 1.2, '?')}suspect</span>` +
    `<span class="item">${swatch(LOAD_RAMP[0]!.fill, '#4b5563', 1.2, '\u2212')}negative</span>` +
    `<span class="item">${swatch(LOAD_RAMP[0]!.fill, '#4b5563', 1.2, '\u00d7')}invalid (retest)</span>` +
    `<span class="item" data-legend-missing=""><svg width="20" height="20" viewBox="0 0 20 20" aria-hidden="true"><rect x="1.5" y="1.5" width="17" height="17" fill="#ffffff" stroke="#4b5563" stroke-width="1.2" stroke-dasharray="3 2"/><text x="10" y="10.5" text-anchor="middle" dominant-baseline="central" font-size="13" font-weight="700" fill="${COLOURS.ink}">M</text></svg>no result (missing)</span>` +
    `<span class="item">${swatch('#ffffff', COLOURS.penStroke, 0.8)}no rope</span>` +
    `<span class="item">${hatch(`${key}-lg-e`, false)}empty</span>` +
    `<span class="item">${hatch(`${key}-lg-o`, true)}out of use</span>` +
    `<span class="item"><svg width="20" height="20" viewBox="0 0 20 20" aria-hidden="true"><rect x="1.5" y="1.5" width="17" height="17" fill="#ffffff" stroke="${COLOURS.penStroke}"/><polygon points="10,4 16,4 16,10" fill="#ffffff" stroke="#000000"/></svg>new positive</span>` +
    `<span class="item"><svg width="26" height="20" viewBox="0 0 26 20" aria-hidden="true"><rect x="2" y="2" width="22" height="16" rx="5" fill="none" stroke="${COLOURS.cluster}" stroke-width="2" stroke-dasharray="7 3"/></svg>cluster</span>` +
    `</div>`
  );
}

/** Legend of a rope-sheet map: the reason shapes. */
export function sheetLegend(rawKey: string, monitored = false): string {
  const key = safeId(rawKey);
  const shape = (inner: string) => `<svg width="22" height="22" viewBox="0 0 22 22" aria-hidden="true">${inner}</svg>`;
  return (
    `<div class="legend" data-legend="">` +
    `<span class="item">${shape('<circle cx="11" cy="11" r="8" fill="#ffffff" stroke="#000000" stroke-width="2"/>')}routine rope</span>` +
    `<span class="item">${shape('<polygon points="11,2 20.5,18.5 1.5,18.5" fill="#ffffff" stroke="#000000" stroke-width="2.4"/>')}follow-up rope (next to a positive)</span>` +
    `<span class="item">${shape('<rect x="5" y="5" width="12" height="12" fill="#ffffff" stroke="#000000" stroke-width="2.4" transform="rotate(45 11 11)"/>')}retest rope</span>` +
    (monitored
      ? `<span class="item">${shape('<rect x="3" y="3" width="16" height="16" fill="#ffffff" stroke="#000000" stroke-width="3"/>')}re-rope (positive pen: its Ct series goes on)</span>` +
        `<span class="item">${shape('<circle cx="11" cy="11" r="8" fill="#ffffff" stroke="#000000" stroke-width="2" stroke-dasharray="3 2"/>')}tracking rope (same pens every round)</span>`
      : '') +
    `<span class="item">number = line on the checklist</span>` +
    `<span class="item">${hatch(`${key}-lg-e`, false)}empty</span>` +
    `<span class="item">${hatch(`${key}-lg-o`, true)}out of use</span>` +
    `</div>`
  );
}

/** A probability as a percentage with one decimal ("95.0%"), guarded as `formatPercent` is; never NaN. */
export const pct = formatPercent;

/** A p-value as the statistics modules word it ("< 0.001" or three decimals), escaped for HTML. */
export function pValue(p: number | null | undefined): string {
  return escapeHtml(formatPValue(p));
}

/** A number with fixed decimals, or "n/a". */
export function num(value: number | null | undefined, digits = 2): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return 'n/a';
  return value.toFixed(digits);
}

/** Plural helper: "1 rope", "3 ropes". */
export function count(n: number, singular: string, plural = `${singular}s`): string {
  return `${n} ${n === 1 ? singular : plural}`;
}

/** The one plain sentence on what detection confidence means (README, "What confidence achieved means"). */
export function confidenceSentence(designPrevalence: string, target: number): string {
  return (
    `<strong>What detection confidence means:</strong> it is the chance that this round's returned ropes would have found at least one positive pen ` +
    `<em>if</em> infection were present at the design prevalence (${escapeHtml(designPrevalence)}); the program aims for ${pct(target)}. It does not mean the barn is that likely to be free of infection.`
  );
}
