/**
 * Next-round rope sheet, for the producer: per barn a map with the pens to rope (a shape per
 * reason and the checklist number), and a checklist in walking order with the sample ID as text
 * and as a Code 128 barcode, and blanks for the date hung, initials and notes. Large type, the
 * due date on top, the sizing in one line. Printed, each barn starts on a page of its own with
 * its heading, map and the first checklist lines together; a checklist that runs on repeats the
 * barn's name and the column heads on the next page (a table head repeats on every printed page).
 */
import type { NextRoundPlan } from '../../analysis/nextRound.js';
import type { Site } from '../../config/types.js';
import { formatSampleId, isWriteFriendlyCheck, parseSampleId } from '../../plan/sampleId.js';
import { code128Svg } from './barcode.js';
import { renderBarnMap, type PlannedMark } from './barnMap.js';
import { escapeHtml } from './escape.js';
import { LABEL_LAYOUTS } from './labelSheetPage.js';
import { count, renderPage, sheetLegend } from './page.js';

export interface RopeSheetInput {
  site: Site;
  /** The site's herd-status block (html/herdStatus.ts), when it has one. */
  herdStatus?: string;
  plan: NextRoundPlan;
  notices: readonly string[];
}

export const SHEET_SCALE = 46;

/** Bar height of the checklist barcodes: a scanner needs a few millimetres; the line stays short (common practice, no source). */
const CHECKLIST_BARCODE_MM = 6;

/** A sequence number below the plan's highest that no rope carries, and why. */
export interface SkippedSequence {
  sequence: number;
  /**
   * `check-character`: the ID's check character would be I, O, L or '*' (isWriteFriendlyCheck),
   * so the planner never hands it out; `earlier-plan`: an earlier version of this round's plan
   * gave it to a pen this version no longer ropes, and IDs once handed out are not given to
   * another pen (a tube labelled from the earlier sheet must not land in the wrong pen).
   */
  reason: 'check-character' | 'earlier-plan';
}

/**
 * The sequence numbers from 1 to the highest in the plan that no rope carries. The planner
 * numbers from 1 upwards and skips only numbers whose check character is not write-friendly
 * (src/plan/roundPlan.ts) or that an earlier version of the plan handed out
 * (src/analysis/nextRound.ts): any other gap is one of the latter.
 */
export function skippedSequences(plan: { ropes: readonly { sampleId: string }[] }): SkippedSequence[] {
  const parsed = plan.ropes.map((rope) => parseSampleId(rope.sampleId)).flatMap((id) => (id.ok ? [id] : []));
  const first = parsed[0];
  if (!first) return [];
  const used = new Set(parsed.map((id) => id.sequence));
  const highest = Math.max(...used);
  const skipped: SkippedSequence[] = [];
  for (let sequence = 1; sequence < highest; sequence++) {
    if (used.has(sequence)) continue;
    const id = formatSampleId({ siteCode: first.siteCode, round: first.round, sequence });
    skipped.push({ sequence, reason: isWriteFriendlyCheck(id) ? 'earlier-plan' : 'check-character' });
  }
  return skipped;
}

const three = (sequence: number) => String(sequence).padStart(3, '0');

/** The sentence under the instructions that says why numbers are missing ('' when none is). */
export function skippedLine(skipped: readonly SkippedSequence[]): string {
  if (skipped.length === 0) return '';
  const list = (reason: SkippedSequence['reason']) =>
    skipped.filter((entry) => entry.reason === reason).map((entry) => three(entry.sequence));
  const parts: string[] = [];
  const check = list('check-character');
  const earlier = list('earlier-plan');
  if (check.length > 0)
    parts.push(
      `${check.join(', ')}: never used, because the last character of the ID would be I, O, L or *, which are easily misread`,
    );
  if (earlier.length > 0)
    parts.push(
      `${earlier.join(', ')}: given to a pen by an earlier version of this sheet that no longer needs a rope, and never given to another pen`,
    );
  return `Sample numbers skipped on purpose, no tube is missing: ${parts.join('; ')}.`;
}

/** The one-line sizing statement of the sheet. */
export function sizingLine(plan: NextRoundPlan): string {
  const routine = plan.barns.reduce((sum, barn) => sum + barn.routine, 0);
  const followUp = plan.barns.reduce((sum, barn) => sum + barn.followUp, 0);
  const retest = plan.barns.reduce((sum, barn) => sum + barn.retest, 0);
  const reRope = plan.barns.reduce((sum, barn) => sum + barn.reRope, 0);
  const tracking = plan.barns.reduce((sum, barn) => sum + barn.tracking, 0);
  const monitoring =
    reRope + tracking > 0 ? `, ${reRope} re-rope, ${tracking} tracking (positive barns, monitored)` : '';
  return (
    `${count(plan.ropes.length, 'rope')} in ${count(plan.barns.length, 'barn')}: ${routine} routine, ${followUp} follow-up, ${retest} retest${monitoring}. ` +
    plan.sizing.ifNegative +
    // A monitored barn is known to be infected: the detection figures speak of the surveyed barns only.
    (monitoring === '' ? '' : ' The positive barns are monitored and not counted in these figures.')
  );
}

/** The checklist's column heads; the barn row above them repeats on every printed page. */
// A pooled rope's pool is written under its sample ID (a column of its own would not fit the printed width).
const COLUMNS =
  '<th class="num">#</th><th>Pen</th><th>Side</th><th>Sample ID</th><th>Why</th><th class="write">Date hung</th><th class="write initials">Initials</th><th class="write notes">Notes: hung elsewhere (pen) / pen empty</th>';

/**
 * Renders the rope sheet (next-round.html). Checklist lines keep the plan's order, which is
 * already the walking order; the numbers on the maps are those lines.
 */
export function renderRopeSheetPage(input: RopeSheetInput): string {
  const { plan, site } = input;
  const order = new Map(plan.ropes.map((rope, index) => [`${rope.barnId}/${rope.penId}`, index + 1]));
  const due = plan.overdue
    ? `<div class="overdue" data-overdue="">Overdue: this round was due on ${escapeHtml(plan.dueDate)} (${count(plan.daysOverdue, 'day')} ago). Hang the ropes as soon as possible.</div>`
    : `<p class="due">Hang these ropes by ${escapeHtml(plan.dueDate)}.</p>`;
  const skipped = skippedLine(skippedSequences(plan));
  const barns = site.barns
    .map((barn) => {
      const ropes = plan.ropes.filter((rope) => rope.barnId === barn.id);
      const title = `${escapeHtml(barn.name)} (${escapeHtml(barn.id)})`;
      if (ropes.length === 0)
        return `<section class="barn sheet-barn" data-barn="${escapeHtml(barn.id)}"><h2>${title}</h2><p>No ropes in this barn this round.</p></section>`;
      const planned = new Map<string, PlannedMark>(
        ropes.map((rope) => [rope.penId, { reason: rope.reason, order: order.get(`${rope.barnId}/${rope.penId}`)! }]),
      );
      const map = renderBarnMap(barn, {
        key: `sheet-${barn.id}`,
        scale: SHEET_SCALE,
        detail: 'full',
        title: `${barn.name}: ropes to hang`,
        planned,
        attributes: { 'data-map': 'sheet' },
      });
      const rows = ropes
        .map((rope) => {
          const line = order.get(`${rope.barnId}/${rope.penId}`)!;
          const id = escapeHtml(rope.sampleId);
          return (
            `<tr data-rope="${id}"><td class="num">${line}</td><td><strong>${escapeHtml(rope.penId)}</strong></td><td>${escapeHtml(rope.side)}</td>` +
            `<td class="sample"><strong>${id}</strong>${code128Svg(rope.sampleId, { heightMm: CHECKLIST_BARCODE_MM })}${rope.poolId === undefined ? '' : `<br><span data-pool="">into pool <strong>${escapeHtml(rope.poolId)}</strong></span>`}</td><td>${escapeHtml(rope.reason)}</td>` +
            `<td class="write"></td><td class="write initials"></td><td class="write notes"></td></tr>`
          );
        })
        .join('');
      const table =
        `<table class="checklist" data-checklist="${escapeHtml(barn.id)}"><thead><tr class="barn-row"><th colspan="8" data-barn-head="">${title}, ${count(ropes.length, 'rope')}: checklist</th></tr>` +
        `<tr>${COLUMNS}</tr></thead><tbody>${rows}</tbody></table>`;
      return (
        `<section class="barn sheet-barn" data-barn="${escapeHtml(barn.id)}"><div class="barn-top"><h2>${title}: ${count(ropes.length, 'rope')}</h2>` +
        `<figure>${map}</figure>${sheetLegend(
          `sheet-${barn.id}`,
          ropes.some((rope) => rope.reason === 're-rope' || rope.reason === 'tracking'),
        )}</div>${table}</section>`
      );
    })
    .join('');
  return renderPage({
    title: `${plan.site.name}: ropes for round ${plan.round}`,
    heading: `${plan.site.name}: ropes for round ${plan.round}`,
    subheading: escapeHtml(sizingLine(plan)),
    notices: input.notices,
    nav: [
      { href: '../index.html', label: 'All sites' },
      ...LABEL_LAYOUTS.map((layout) => ({ href: layout.file, label: layout.link })),
    ],
    body:
      `${due}<p class="instructions">Hang one rope per listed pen, on the side of the alley given, for 20 to 30 minutes. Stick the pen's label on the tube (or write the sample ID on it); ` +
      `the lab scans the barcode. Walk in the order of the list; write the date and your initials on each line, and in Notes if a rope went to another pen or the pen was empty.</p>` +
      (skipped ? `<p class="skipped" data-skipped="">${escapeHtml(skipped)}</p>` : '') +
      barns,
    large: true,
    cautionsFirst: true,
    herdStatus: input.herdStatus,
  });
}
