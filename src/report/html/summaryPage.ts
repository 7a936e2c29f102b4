/**
 * Site round summary, for clinic staff: per barn the ropes hung and returned, missing ropes,
 * results by class, detection confidence against the target, the prevalence estimate when
 * positives exist; per assay the site's detection and the probability of freedom so far; the
 * alerts in plain words with the number behind each.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import type { PageAlert } from './alerts.js';
import { escapeHtml } from './escape.js';
import { confidenceSentence, count, pct, renderPage } from './page.js';

export interface SummaryPageInput {
  summary: RoundSummary;
  alerts: readonly PageAlert[];
  notices: readonly string[];
}

function alertsBlock(alerts: readonly PageAlert[]): string {
  if (alerts.length === 0) return `<div class="calm" data-alerts="0"><strong>No alerts this round.</strong></div>`;
  return `<div class="alerts" data-alerts="${alerts.length}"><strong>Needs attention (${alerts.length})</strong><ul>${alerts.map((alert) => `<li data-alert="${alert.kind}">${escapeHtml(alert.message)}</li>`).join('')}</ul></div>`;
}

function siteTable(summary: RoundSummary): string {
  const rows = summary.assays
    .map((assay) => {
      const site = assay.site;
      const freedom = site.freedomReset
        ? `reset by a positive round (was ${pct(site.priorFreedom)} before it)`
        : `${pct(site.priorFreedom)} before this round \u2192 <strong>${pct(site.freedom)}</strong> after it (repeated rounds like this level off at ${pct(site.levelsOffAt)})`;
      return `<tr><td>${escapeHtml(assay.name)}</td><td class="num">${pct(site.detectionConfidence)}</td><td>${site.positive ? `positive in ${escapeHtml(site.positiveBarns.join(', '))}` : 'no positive rope'}</td><td>${freedom}</td></tr>`;
    })
    .join('');
  return `<table data-site-table=""><thead><tr><th>Assay</th><th class="num">Site detection confidence</th><th>Result</th><th>Probability of freedom so far</th></tr></thead><tbody>${rows}</tbody></table>`;
}

function barnBlock(summary: RoundSummary, barn: RoundSummary['barns'][number]): string {
  const target = summary.program.targetConfidence;
  const missing = barn.missingSampleIds.length;
  const rows = barn.assays
    .map((tally) => {
      const c = tally.confidence;
      const met = c.detectionConfidence >= target;
      const need = met
        ? 'target met'
        : c.targetReachable
          ? `below target: ${c.ropesNeeded ?? 'n/a'} valid ropes would reach it`
          : `below target: one round cannot reach it (best ${pct(c.censusConfidence)}); ${c.roundsNeededIfUnreachable ?? 'n/a'} rounds would`;
      const prevalence = c.prevalence
        ? `${pct(c.prevalence.apparent)} of tested pens (95% CI ${pct(c.prevalence.lower95)}\u2013${pct(c.prevalence.upper95)}); corrected for rope sensitivity ${c.sensitivity}: ${pct(c.prevalence.trueEstimate)}${c.prevalence.note ? ` (${escapeHtml(c.prevalence.note)})` : ''}`
        : '<span class="muted">no positives</span>';
      const pens = [
        tally.positivePens.length > 0 ? `+ ${escapeHtml(tally.positivePens.join(', '))}` : '',
        tally.suspectPens.length > 0 ? `? ${escapeHtml(tally.suspectPens.join(', '))}` : '',
        tally.invalidPens.length > 0 ? `\u00d7 ${escapeHtml(tally.invalidPens.join(', '))}` : '',
      ]
        .filter((text) => text !== '')
        .join('<br>');
      return (
        `<tr data-assay="${escapeHtml(tally.assayId)}"><td>${escapeHtml(tally.assayId)}</td><td class="num">${tally.tested}</td><td class="num">${tally.positive}</td><td class="num">${tally.suspect}</td><td class="num">${tally.negative}</td><td class="num">${tally.invalid}</td>` +
        `<td>${pens || '<span class="muted">none</span>'}</td>` +
        `<td class="num ${met ? 'met' : 'below'}">${pct(c.detectionConfidence)}</td><td>${need}</td><td>${prevalence}</td></tr>`
      );
    })
    .join('');
  return (
    `<section class="barn" data-barn="${escapeHtml(barn.barnId)}"><h3>${escapeHtml(barn.name)} (${escapeHtml(barn.barnId)})</h3>` +
    `<p>${count(barn.pensInUse, 'pen')} in use; ${count(barn.ropesHung, 'rope')} hung, ${barn.ropesReturned} returned` +
    (missing > 0 ? `; <strong>${count(missing, 'rope')} missing</strong>: ${escapeHtml(barn.missingSampleIds.join(', '))}` : '; none missing') +
    `.</p>` +
    `<table><thead><tr><th>Assay</th><th class="num">Tested</th><th class="num">Positive</th><th class="num">Suspect</th><th class="num">Negative</th><th class="num">Invalid</th><th>Pens (+ positive, ? suspect, \u00d7 invalid)</th>` +
    `<th class="num">Detection confidence (target ${pct(target)})</th><th>Against target</th><th>Prevalence estimate</th></tr></thead><tbody>${rows}</tbody></table></section>`
  );
}

/**
 * Renders the site round summary page (summary.html).
 * @param input the round summary, its alerts and the notifiable notices for its assays
 */
export function renderSummaryPage(input: SummaryPageInput): string {
  const { summary } = input;
  const round = summary.round;
  const body =
    `<h2>Alerts</h2>${alertsBlock(input.alerts)}` +
    `<h2>Site</h2><p class="explain">${confidenceSentence(summary.program.designPrevalence, summary.program.targetConfidence)}</p>${siteTable(summary)}` +
    `<h2>Barns</h2>${summary.barns.map((barn) => barnBlock(summary, barn)).join('')}`;
  return renderPage({
    title: `${summary.site.name}, round ${round.number}: summary`,
    heading: `${summary.site.name}: round ${round.number} summary`,
    subheading: `Round ${escapeHtml(round.id)}, ropes ${escapeHtml(round.startOn)} to ${escapeHtml(round.endOn)} (round ${round.number} of ${round.roundsOnSite} on this site). Design prevalence ${escapeHtml(summary.program.designPrevalence)}, target ${pct(summary.program.targetConfidence)} per barn.`,
    notices: input.notices,
    nav: [
      { href: '../../index.html', label: 'All sites' },
      { href: 'clusters.html', label: 'Cluster review (vet)' },
      { href: '../next-round.html', label: 'Next round rope sheet' },
    ],
    body,
  });
}
