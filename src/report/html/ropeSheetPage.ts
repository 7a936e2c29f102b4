/**
 * Next-round rope sheet, for the producer: per barn a map with the pens to rope (a shape per
 * reason and the checklist number), and a checklist in walking order with a tick box. Large
 * type, the due date on top, the sizing in one line, nothing else.
 */
import type { NextRoundPlan } from '../../analysis/nextRound.js';
import type { Site } from '../../config/types.js';
import { renderBarnMap, type PlannedMark } from './barnMap.js';
import { escapeHtml } from './escape.js';
import { count, pct, renderPage, sheetLegend } from './page.js';

export interface RopeSheetInput {
  site: Site;
  /** The site's herd-status block (html/herdStatus.ts), when it has one. */
  herdStatus?: string;
  plan: NextRoundPlan;
  notices: readonly string[];
}

export const SHEET_SCALE = 46;

const REASON_WORD: Readonly<Record<PlannedMark['reason'], string>> = {
  routine: 'routine',
  'follow-up': 'follow-up (next to a positive)',
  retest: 'retest',
};

/** The one-line sizing statement of the sheet. */
export function sizingLine(plan: NextRoundPlan): string {
  const routine = plan.barns.reduce((sum, barn) => sum + barn.routine, 0);
  const followUp = plan.barns.reduce((sum, barn) => sum + barn.followUp, 0);
  const retest = plan.barns.reduce((sum, barn) => sum + barn.retest, 0);
  return (
    `${count(plan.ropes.length, 'rope')} in ${count(plan.barns.length, 'barn')}: ${routine} routine, ${followUp} follow-up, ${retest} retest. ` +
    `If they all come back negative on time, the site has ${pct(plan.siteDetectionIfNegative)} detection confidence at the design prevalence (target ${pct(plan.sizing.target)} per ${plan.sizing.sizeFor}).`
  );
}

/**
 * Renders the rope sheet (next-round.html). Checklist lines keep the plan's order, which is
 * already the walking order; the numbers on the maps are those lines.
 */
/** Ropes in a barn above which the checklist is set in two columns. */
const LONG_LIST = 10;

export function renderRopeSheetPage(input: RopeSheetInput): string {
  const { plan, site } = input;
  const order = new Map(plan.ropes.map((rope, index) => [`${rope.barnId}/${rope.penId}`, index + 1]));
  const due = plan.overdue
    ? `<div class="overdue" data-overdue="">Overdue: this round was due on ${escapeHtml(plan.dueDate)} (${count(plan.daysOverdue, 'day')} ago). Hang the ropes as soon as possible.</div>`
    : `<p class="due">Hang these ropes by ${escapeHtml(plan.dueDate)}.</p>`;
  const barns = site.barns
    .map((barn) => {
      const ropes = plan.ropes.filter((rope) => rope.barnId === barn.id);
      if (ropes.length === 0) return `<section class="barn"><h2>${escapeHtml(barn.name)} (${escapeHtml(barn.id)})</h2><p>No ropes in this barn this round.</p></section>`;
      const planned = new Map<string, PlannedMark>(ropes.map((rope) => [rope.penId, { reason: rope.reason, order: order.get(`${rope.barnId}/${rope.penId}`)! }]));
      const map = renderBarnMap(barn, {
        key: `sheet-${barn.id}`,
        scale: SHEET_SCALE,
        detail: 'full',
        title: `${barn.name}: ropes to hang`,
        planned,
        attributes: { 'data-map': 'sheet' },
      });
      // A long list goes into two columns (first half left, second half right, still in walking
      // order) with short words, so that a large site's sheet stays short when printed.
      const compact = ropes.length > LONG_LIST;
      const rowOf = (rope: (typeof ropes)[number]) => {
        const line = order.get(`${rope.barnId}/${rope.penId}`)!;
        const why = compact ? rope.reason : REASON_WORD[rope.reason];
        return `<tr data-rope="${escapeHtml(rope.sampleId)}"><td class="num">${line}</td><td><strong>${escapeHtml(rope.penId)}</strong></td><td>${escapeHtml(rope.side)}</td><td><strong>${escapeHtml(rope.sampleId)}</strong></td><td>${escapeHtml(why)}</td><td class="tick"><span class="box" aria-label="done"></span></td></tr>`;
      };
      const table = (part: typeof ropes) =>
        `<table class="checklist"><thead><tr><th class="num">#</th><th>Pen</th><th>Side</th><th>${compact ? 'Sample ID' : 'Sample ID (tube label)'}</th><th>Why</th><th>Done</th></tr></thead><tbody>${part.map(rowOf).join('')}</tbody></table>`;
      const half = Math.ceil(ropes.length / 2);
      const checklist = compact ? `<div class="checklist-pair">${table(ropes.slice(0, half))}${table(ropes.slice(half))}</div>` : table(ropes);
      return (
        `<section class="barn" data-barn="${escapeHtml(barn.id)}"><h2>${escapeHtml(barn.name)} (${escapeHtml(barn.id)}): ${count(ropes.length, 'rope')}</h2>` +
        `<figure>${map}</figure>${sheetLegend(`sheet-${barn.id}`)}` +
        `${checklist}</section>`
      );
    })
    .join('');
  return renderPage({
    title: `${plan.site.name}: ropes for round ${plan.round}`,
    heading: `${plan.site.name}: ropes for round ${plan.round}`,
    subheading: escapeHtml(sizingLine(plan)),
    notices: input.notices,
    nav: [{ href: '../index.html', label: 'All sites' }],
    body: `${due}<p>Hang one rope per listed pen, on the side of the alley given, for 20 to 30 minutes; write the sample ID on the tube. Walk in the order of the list.</p>${barns}`,
    large: true,
    herdStatus: input.herdStatus,
  });
}
