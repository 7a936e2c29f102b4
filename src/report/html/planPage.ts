/**
 * The plan's reasoning, for the herd veterinarian (outbox/<site>/plan.html): how each barn was
 * sized and why, what a negative round on time proves against a missed one (the freedom
 * forecast), how the schedule compares with other schedules of the same ropes per month, and how
 * evenly the ropes cover each barn. Everything here is in next-round.json already; this page only
 * puts it in words and tables.
 */
import type { NextRoundPlan } from '../../analysis/nextRound.js';
import { escapeHtml } from './escape.js';
import { num, pct, renderPage } from './page.js';

export interface PlanPageInput {
  plan: NextRoundPlan;
  notices: readonly string[];
  /** The site's herd-status block (already escaped HTML; see herdStatus.ts). */
  herdStatus?: string | undefined;
}

const days = (value: number | null | undefined) =>
  value === null || value === undefined || !Number.isFinite(value) ? 'n/a' : `${num(value, 1)} days`;

function sizingBlock(plan: NextRoundPlan): string {
  const spatial = plan.sizing.sizingModel === 'spatial';
  const rows = plan.barns
    .map((barn) => {
      const s = barn.sizing;
      const other = spatial ? s.plannedHypergeometric : s.plannedSpreadModel;
      // A monitored barn is positive: its ropes follow the infection and no detection figure applies.
      const detection = barn.monitoring
        ? '<td class="num" colspan="2">monitored</td>'
        : `<td class="num">${pct(s.plannedDetection)}</td><td class="num">${other === null ? 'n/a' : pct(other)}</td>`;
      return (
        `<tr data-plan-barn="${escapeHtml(barn.barnId)}"><td>${escapeHtml(barn.barnId)}</td><td>${escapeHtml(s.assayId)}</td><td class="num">${s.pensInUse}</td><td class="num">${s.designInfected}</td><td class="num">${num(s.sensitivity)}</td>` +
        `<td class="num">${barn.routine}</td><td class="num">${barn.followUp}</td><td class="num">${barn.retest}</td><td class="num">${barn.reRope + barn.tracking}</td>${detection}</tr>` +
        // The reading is a sentence: a row of its own, the width of the table, so the numbers stay one line.
        `<tr data-plan-reading="${escapeHtml(barn.barnId)}"><td></td><td colspan="10">${escapeHtml(s.statement)}</td></tr>`
      );
    })
    .join('');
  const sizedBy = spatial ? 'the spread model' : 'the hypergeometric model';
  const besideIt = spatial
    ? 'the hypergeometric model'
    : 'the spread model (what evenly spaced ropes buy under pen-to-pen spread)';
  return (
    `<h2>How many ropes, and why</h2>` +
    `<p class="muted">Infected pens: at the design prevalence. Planned: the detection of the routine ropes by ${sizedBy}, which sized them; beside it: ${besideIt}.</p>` +
    `<table data-plan-sizing=""><thead><tr><th>Barn</th><th>Sized for</th><th class="num">Pens in use</th><th class="num">Infected pens</th><th class="num">Rope Se</th>` +
    `<th class="num">Routine</th><th class="num">Follow-up</th><th class="num">Retest</th><th class="num">Re-rope, tracking</th><th class="num">Planned</th><th class="num">Beside it</th></tr></thead><tbody>${rows}</tbody></table>` +
    (plan.sizing.notes.length > 0
      ? `<ul data-plan-notes="sizing">${plan.sizing.notes.map((note) => `<li>${escapeHtml(note)}</li>`).join('')}</ul>`
      : '') +
    `<p data-plan-if-negative="">${escapeHtml(plan.sizing.ifNegative)}</p>`
  );
}

function freedomBlock(plan: NextRoundPlan): string {
  const f = plan.freedom;
  if (f === null) {
    return `<h2>Freedom forecast: on time against missed</h2><p data-plan-freedom="none">No forecast for this round. ${escapeHtml(plan.notes.find((note) => note.includes('freedom')) ?? 'No round has been analysed yet.')}</p>`;
  }
  return (
    `<h2>Freedom forecast: on time against missed</h2>` +
    `<p>${escapeHtml(f.sentence)}</p>` +
    `<table data-plan-freedom="${escapeHtml(f.assayId)}"><thead><tr><th>Probability of freedom from ${escapeHtml(f.assayId)}</th><th class="num">Value</th></tr></thead><tbody>` +
    `<tr><td>Now, after the last round</td><td class="num">${pct(f.currentFreedom)}</td></tr>` +
    `<tr data-case="on-time"><td>On ${escapeHtml(plan.dueDate)}, after a negative round on time</td><td class="num">${pct(f.onTime)}</td></tr>` +
    `<tr data-case="without"><td>On ${escapeHtml(plan.dueDate)}, with the round missed</td><td class="num">${pct(f.withoutRound)}</td></tr>` +
    `<tr data-case="missed"><td>One interval later, after a negative round then</td><td class="num">${pct(f.missed)}</td></tr>` +
    `<tr><td>What missing the round costs</td><td class="num">${num(100 * f.cost, 3)} percentage points</td></tr>` +
    `</tbody></table><p class="muted">Freedom discounted by the chance of introduction between rounds (Martin, Cameron &amp; Greiner 2007).</p>`
  );
}

function schedulesBlock(plan: NextRoundPlan): string {
  const sections = plan.schedules
    .map((schedule) => {
      const statics = schedule.static
        .map(
          (option) =>
            `<tr data-schedule="${escapeHtml(option.label)}"><td>${escapeHtml(option.label)}</td><td class="num">${option.ropes}</td><td class="num">${option.intervalDays}</td><td class="num">${num(option.ropesPer30Days, 1)}</td><td class="num">${pct(option.perRoundDetection)}</td><td class="num">${days(option.expectedDelayDays)}</td></tr>`,
        )
        .join('');
      const growing = schedule.growing
        .map((option) => {
          const sim = option.simulated;
          const simulated =
            sim.meanDays === null
              ? 'never detected'
              : `${days(sim.meanDays)}${sim.standardError === null ? '' : ` \u00b1 ${num(sim.standardError, 2)}`}${sim.censored > 0 ? ` (${sim.censored} of ${sim.replicates} not detected)` : ''}`;
          return `<tr data-schedule-growing="${escapeHtml(option.label)}"><td>${escapeHtml(option.label)}</td><td class="num">${option.ropes}</td><td class="num">${option.intervalDays}</td><td class="num">${simulated}</td></tr>`;
        })
        .join('');
      return (
        `<section class="barn" data-plan-schedules="${escapeHtml(schedule.barnId)}"><h3>Barn ${escapeHtml(schedule.barnId)}</h3>` +
        `<table><thead><tr><th>Schedule (same ropes per month)</th><th class="num">Ropes</th><th class="num">Every (days)</th><th class="num">Ropes per 30 days</th><th class="num">Detection per round</th><th class="num">Expected delay to detection</th></tr></thead><tbody>${statics}</tbody></table>` +
        `<table><thead><tr><th>Growing infection</th><th class="num">Ropes</th><th class="num">Every (days)</th><th class="num">Mean days to detection (simulated, \u00b1 SE)</th></tr></thead><tbody>${growing}</tbody></table>` +
        (schedule.notes.length > 0
          ? `<ul class="muted">${[...new Set(schedule.notes)].map((note) => `<li>${escapeHtml(note)}</li>`).join('')}</ul>`
          : '') +
        `</section>`
      );
    })
    .join('');
  return `<h2>Schedule comparison</h2><p>The same ropes per month, hung as now, as half the ropes twice as often, or as twice the ropes half as often: first with the infection at the design prevalence, then with infected pens growing from one.</p>${sections}`;
}

function coverageBlock(plan: NextRoundPlan): string {
  const rows = plan.barns
    .map(
      (barn) =>
        `<tr data-plan-coverage="${escapeHtml(barn.barnId)}"><td>${escapeHtml(barn.barnId)}</td><td class="num">${num(barn.routineCoveringRadius, 2)}</td><td class="num">${num(barn.coveringRadius, 2)}</td><td class="num">${num(barn.meanDistance, 2)}</td>` +
        `<td class="num">${barn.coverageRounds ?? 'n/a'}</td><td class="num">${barn.cycleLength}</td><td>${barn.notes.length > 0 ? escapeHtml(barn.notes.join(' ')) : '<span class="muted">none</span>'}</td></tr>`,
    )
    .join('');
  return (
    `<h2>Coverage</h2><p>Covering radius: the farthest any in-use pen lies from the nearest rope, in pen units (smaller is more even). The routine ropes rotate, so every pen has a rope within a few rounds.</p>` +
    `<table data-plan-coverage-table=""><thead><tr><th>Barn</th><th class="num">Covering radius, routine ropes</th><th class="num">Covering radius, all ropes</th><th class="num">Mean distance to a rope</th><th class="num">Rounds until every pen had a rope</th><th class="num">Rotation repeats every (rounds)</th><th>Notes</th></tr></thead><tbody>${rows}</tbody></table>`
  );
}

/**
 * Renders the plan page (plan.html beside next-round.html).
 * @param input the plan and the notifiable notices of the site's assays
 */
export function renderPlanPage(input: PlanPageInput): string {
  const { plan } = input;
  const due = plan.overdue
    ? `<p class="overdue">Round ${plan.round} was due on ${escapeHtml(plan.dueDate)}: ${plan.daysOverdue} days overdue.</p>`
    : `<p class="due">Round ${plan.round} is due on ${escapeHtml(plan.dueDate)}.</p>`;
  const other = plan.notes.filter((note) => !(plan.freedom === null && note.includes('freedom')));
  const body =
    due +
    sizingBlock(plan) +
    freedomBlock(plan) +
    schedulesBlock(plan) +
    coverageBlock(plan) +
    (other.length > 0
      ? `<h2>Other notes</h2><ul data-plan-notes="plan">${other.map((note) => `<li>${escapeHtml(note)}</li>`).join('')}</ul>`
      : '') +
    `<p class="muted">Seed of the simulations: ${plan.seed}. The same store gives the same plan.</p>`;
  return renderPage({
    title: `${plan.site.name}: plan for round ${plan.round}`,
    heading: `${plan.site.name}: the plan for round ${plan.round}, and why`,
    subheading: plan.basedOn
      ? `After round ${plan.basedOn.round} (${escapeHtml(plan.basedOn.startOn)}).`
      : 'No round yet: the first round.',
    notices: input.notices,
    herdStatus: input.herdStatus,
    nav: [
      { href: '../index.html', label: 'All sites' },
      { href: 'next-round.html', label: 'Rope sheet' },
    ],
    body,
  });
}
