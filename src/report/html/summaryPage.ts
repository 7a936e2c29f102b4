/**
 * Site round summary, for clinic staff: per barn the ropes hung and returned, missing ropes,
 * results by class, detection confidence against the target, the prevalence estimate when
 * positives exist, and the pens with a finding with the lab and cutoffs each was read with; per
 * assay the site's detection and the probability of freedom so far; every sample whose lab call
 * differs from its reading; every report the lab corrected or reported again, with both
 * readings; the pens whose result was refused under a mistyped ID, with the one-line fix; where
 * the results came from (lab, case numbers, dates), to file against the lab's report; the alerts
 * in plain words with the number behind each.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import { antibodyMeaning } from '../summaryNotices.js';
import type { SinceLastRound } from '../../analysis/sinceLastRound.js';
import { alertItem, type PageAlert } from './alerts.js';
import { escapeHtml } from './escape.js';
import { confidenceSentence, count, pct, renderPage } from './page.js';
import { cutoffText, hasAntibody, valueCell } from './resultCells.js';
import { readingText, replacementWhy, reportDates } from '../roundNotes.js';
import { barnBlock } from './summaryBarn.js';
import { siteRopes } from '../siteTally.js';

export interface SummaryPageInput {
  summary: RoundSummary;
  /** The site's herd-status block (html/herdStatus.ts), when it has one. */
  herdStatus?: string;
  alerts: readonly PageAlert[];
  notices: readonly string[];
  /** What changed since the round before (src/analysis/sinceLastRound); no table without it. */
  since?: SinceLastRound;
}

/**
 * The pens that changed since the last round, one row per barn and assay with a change: newly
 * positive, cleared (positive then, negative now), ropes without a result (the barn's, for every
 * assay), invalid results.
 */
export function sinceBlock(summary: RoundSummary, since: SinceLastRound): string {
  const pens = (list: readonly { penId: string | null; sampleId: string }[]) =>
    list.length === 0
      ? '<span class="muted">none</span>'
      : escapeHtml(list.map((entry) => entry.penId ?? entry.sampleId).join(', '));
  // One row per barn and assay with a change; missing ropes (no result for any assay) on the barn's first row.
  const rows = summary.barns
    .flatMap((barn) => {
      const of = <T extends { barnId: string; assayId?: string }>(list: readonly T[], assayId: string) =>
        list.filter((entry) => entry.barnId === barn.barnId && entry.assayId === assayId);
      const missing = since.missing.filter((entry) => entry.barnId === barn.barnId);
      const lines = summary.assays
        .map((assay) => ({
          assayId: assay.id,
          parts: [of(since.newlyPositive, assay.id), of(since.cleared, assay.id), of(since.invalid, assay.id)],
        }))
        .filter((line) => line.parts.some((part) => part.length > 0));
      if (lines.length === 0 && missing.length > 0) lines.push({ assayId: '', parts: [[], [], []] });
      return lines.map(
        (line, index) =>
          `<tr data-since="${escapeHtml(barn.barnId)}"${line.assayId ? ` data-since-assay="${escapeHtml(line.assayId)}"` : ''}><td>${escapeHtml(barn.name)} (${escapeHtml(barn.barnId)})</td><td>${line.assayId ? escapeHtml(line.assayId) : '<span class="muted">all</span>'}</td>` +
          `<td>${pens(line.parts[0]!)}</td><td>${pens(line.parts[1]!)}</td><td>${index === 0 ? pens(missing) : '<span class="muted">(above)</span>'}</td><td>${pens(line.parts[2]!)}</td></tr>`,
      );
    })
    .join('');
  const heading = since.previous === null ? 'Since last round' : `Since round ${since.previous.number}`;
  if (rows === '') {
    const first = since.previous === null ? 'The first round on the site: nothing to compare. ' : '';
    return `<h2>${heading}</h2><p data-since-none="">${first}No pen newly positive or cleared, no rope missing or invalid.</p>`;
  }
  return (
    `<h2>${heading}</h2>` +
    `<table data-since-table=""><thead><tr><th>Barn</th><th>Assay</th><th>Newly positive</th><th>Cleared (now negative)</th><th>Missing ropes</th><th>Invalid</th></tr></thead><tbody>${rows}</tbody></table>`
  );
}

function alertsBlock(alerts: readonly PageAlert[]): string {
  if (alerts.length === 0) return `<div class="calm" data-alerts="0"><strong>No alerts this round.</strong></div>`;
  return `<div class="alerts" data-alerts="${alerts.length}"><strong>Needs attention (${alerts.length})</strong><ul>${alerts.map(alertItem).join('')}</ul></div>`;
}

/**
 * Where the round stands when it is not closed: its ropes are out and the results not yet due,
 * so nothing is missing and no detection figure is given yet.
 */
function stateBlock(summary: RoundSummary): string {
  const { state, resultsDueOn } = summary.round;
  if (state === 'complete') return '';
  const { hung, returned } = siteRopes(summary);
  const text =
    state === 'awaiting-results'
      ? `Awaiting results, due by ${escapeHtml(resultsDueOn)}: ${count(hung, 'rope')} out, none back yet. No detection figure until results come back; a rope becomes missing only after that date.`
      : `Partial: ${returned} of ${count(hung, 'rope')} back; the others are awaited until ${escapeHtml(resultsDueOn)} and become missing only after that date. The figures below count the results back so far.`;
  return `<p class="explain" data-round-state="${state}"><strong>${text}</strong></p>`;
}

function siteTable(summary: RoundSummary): string {
  const nameOf = (id: string) => summary.assays.find((assay) => assay.id === id)?.name ?? id;
  const rows = summary.assays
    .map((assay) => {
      const site = assay.site;
      const antibody = assay.measure === 'sp-ratio';
      // An antibody assay's figures are of exposure: its reset never touches a PCR assay's freedom.
      const freedom =
        site.status?.state === 'positive'
          ? `<strong data-status="positive">positive</strong> since round ${site.status.sinceRound}: no probability of freedom while a barn is positive; ` +
            `the site clears after ${count(summary.program.clearAfterNegativeRounds, 'negative round')} in a row in every positive barn (${site.status.negativeRoundsInARow} so far)`
          : site.freedomReset
            ? antibody
              ? `freedom from exposure reset by an antibody positive round (was ${pct(site.priorFreedom)} before it); the PCR freedom is not reset`
              : `reset by a positive round (was ${pct(site.priorFreedom)} before it)`
            : `${antibody ? 'freedom from exposure: ' : ''}${pct(site.priorFreedom)} before this round \u2192 <strong>${pct(site.freedom)}</strong> after it (repeated rounds like this level off at ${pct(site.levelsOffAt)})`;
      const result = site.positive
        ? `${antibody ? 'antibody ' : ''}positive in ${escapeHtml(site.positiveBarns.join(', '))}`
        : antibody
          ? 'no antibody-positive rope'
          : 'no positive rope';
      const name = antibody
        ? `${escapeHtml(assay.name)} <span class="muted">(antibody, S/P: exposure)</span>`
        : escapeHtml(assay.name);
      // Both site figures, each in plain words; the one freedom is built on is marked.
      const figures = assay.siteFigures
        .map(
          (figure) =>
            `<span data-site-figure="${figure.infectedBarns}"${figure.freedom ? ' data-freedom=""' : ''}>${figure.freedom ? '<strong>' : ''}${pct(figure.detection)}${figure.freedom ? '</strong>' : ''} ${escapeHtml(figure.label)}${figure.freedom ? ' (freedom is built on this)' : ''}</span>`,
        )
        .join('<br>');
      return `<tr data-assay="${escapeHtml(assay.id)}" data-measure="${assay.measure}"><td>${name}</td><td>${figures}${site.unpooledDetectionConfidence === undefined ? '' : `<br><span class="muted" data-unpooled="">(pooled; ${pct(site.unpooledDetectionConfidence)} unpooled)</span>`}</td><td>${result}</td><td>${freedom}</td></tr>`;
    })
    .join('');
  const meanings = summary.assays
    .filter((assay) => assay.measure === 'sp-ratio')
    .map(
      (assay) =>
        `<p class="explain" data-antibody="${escapeHtml(assay.id)}">${escapeHtml(antibodyMeaning(assay.name, assay.pairedWith === null ? null : nameOf(assay.pairedWith)))}</p>`,
    )
    .join('');
  return `<table data-site-table=""><thead><tr><th>Assay</th><th class="num">Site detection confidence</th><th>Result</th><th>Probability of freedom so far</th></tr></thead><tbody>${rows}</tbody></table>${meanings}`;
}

/** Every sample of the round whose lab call differs from its reading, with both readings. */
function disagreementsBlock(summary: RoundSummary): string {
  if (summary.disagreements.length === 0) return '';
  const rows = summary.disagreements
    .map(
      (entry) =>
        `<tr data-disagreement="${escapeHtml(entry.sampleId)}"><td>${escapeHtml(entry.barnId)} ${escapeHtml(entry.penId)}</td><td>${escapeHtml(entry.sampleId)}</td><td>${escapeHtml(entry.assayId)}</td>` +
        `<td class="num">${escapeHtml(entry.ctRaw ?? valueCell(entry))}</td><td><strong>${escapeHtml(entry.labCall)}</strong></td>` +
        `<td><strong>${escapeHtml(entry.resultClass)}</strong>: ${escapeHtml(entry.reason)}${entry.standsForPen ? '' : ' (a second rope of the pen; another result stands for it)'}</td>` +
        `<td>${escapeHtml(entry.labName)}${entry.accession ? `, case ${escapeHtml(entry.accession)}` : ''}</td></tr>`,
    )
    .join('');
  return (
    `<h2>Lab call and reading disagree</h2><p>For these samples the lab\u2019s own call names another class than the lab\u2019s cutoffs in the configuration give for the Ct it reported. ` +
    `ropewatch counts the reading from the cutoffs; check the cutoffs in the lab profile against the lab\u2019s report, and ask the lab when they agree.</p>` +
    `<table data-disagreements="${summary.disagreements.length}"><thead><tr><th>Pen</th><th>Sample</th><th>Assay</th><th class="num">${hasAntibody(summary) ? 'Ct or S/P' : 'Ct'} as reported</th><th>Lab\u2019s call</th><th>ropewatch reading</th><th>Lab, case</th></tr></thead><tbody>${rows}</tbody></table>`
  );
}

/**
 * Every report of the round's ropes that another took the place of (a correction, a final report
 * over a preliminary one, a later report), with both readings and the lab's dates and words.
 */
function replacedBlock(summary: RoundSummary): string {
  if (summary.replaced.length === 0) return '';
  // The lab is named when the round's results come from more than one.
  const severalLabs = new Set(summary.sources.map((source) => source.labId)).size > 1;
  const words = (entry: RoundSummary['replaced'][number]) => {
    const before = entry.replaced.statusWord;
    const after = entry.inPlace.statusWord;
    const lab = severalLabs ? `${escapeHtml(entry.labName)}: ` : '';
    if (before === null && after === null) return `${lab}<span class="muted">none</span>`;
    return `${lab}${escapeHtml(before ?? '\u2014')} \u2192 ${escapeHtml(after ?? '\u2014')}`;
  };
  const rows = summary.replaced
    .map(
      (entry) =>
        `<tr data-replaced="${escapeHtml(entry.sampleId)}" data-kind="${escapeHtml(entry.kind ?? '')}"><td>${escapeHtml(entry.barnId)} ${escapeHtml(entry.penId)}</td><td>${escapeHtml(entry.sampleId)}</td><td>${escapeHtml(entry.assayId)}</td>` +
        `<td>${escapeHtml(readingText(entry.replaced))} \u2192 <strong>${escapeHtml(readingText(entry.inPlace))}</strong></td><td>${escapeHtml(reportDates(entry))}</td>` +
        `<td>${words(entry)}</td><td>${escapeHtml(replacementWhy(entry))}</td></tr>`,
    )
    .join('');
  return (
    `<h2>Corrected and replaced reports</h2><p>Reports of this round\u2019s ropes that the lab corrected or reported again. The reading in its place is the one counted; both stay in the store, and the receipt of each file names them.</p>` +
    `<table data-replaced-reports="${summary.replaced.length}"><thead><tr><th>Pen</th><th>Sample</th><th>Assay</th><th>Reading set aside \u2192 reading in its place</th><th>Report dates</th><th>Lab\u2019s word</th><th>Why</th></tr></thead><tbody>${rows}</tbody></table>`
  );
}

/** A date, or "first to last" when they differ. */
const span = (first: string | null, last: string | null) =>
  first === null || last === null ? (first ?? last ?? 'not given') : first === last ? first : `${first} to ${last}`;

/** Where the round's results came from: per lab report, the case numbers and dates; the cutoffs each lab's results were read with. */
function sourcesBlock(summary: RoundSummary): string {
  if (summary.sources.length === 0) return '';
  const rows = summary.sources
    .map(
      (source) =>
        `<tr data-source="${escapeHtml(source.labId)}"><td>${escapeHtml(source.labName)}</td><td>${escapeHtml(source.reportedOn ?? 'not given')}</td>` +
        `<td>${source.accessions.length > 0 ? escapeHtml(caseList(source.accessions)) : '<span class="muted">none given</span>'}</td>` +
        `<td>${escapeHtml(span(source.collectedFrom, source.collectedTo))}</td><td>${escapeHtml(source.barnIds.join(', '))}</td><td>${escapeHtml(source.assays.join(', '))}</td><td class="num">${source.results}</td></tr>`,
    )
    .join('');
  const byLab = new Map<string, string[]>();
  for (const cutoff of summary.cutoffs) {
    const d = cutoff.defaults;
    const differs =
      d !== null &&
      (d.positiveBelow !== cutoff.positiveBelow ||
        d.suspectBelow !== cutoff.suspectBelow ||
        d.cycleLimit !== cutoff.cycleLimit ||
        d.positiveAtOrAbove !== cutoff.positiveAtOrAbove ||
        d.suspectAtOrAbove !== cutoff.suspectAtOrAbove);
    const text =
      cutoff.measure === 'sp-ratio'
        ? `${escapeHtml(cutoff.assayId)} ${cutoffText(cutoff)}` +
          (differs
            ? ` <span class="muted">(the lab\u2019s own; assays.yaml default ${cutoffText({ ...d!, measure: 'sp-ratio' })})</span>`
            : '')
        : `${escapeHtml(cutoff.assayId)} positive below ${cutoff.positiveBelow}, suspect below ${cutoff.suspectBelow}, cycle limit ${cutoff.cycleLimit}` +
          (differs
            ? ` <span class="muted">(the lab\u2019s own; assays.yaml default ${d!.positiveBelow}, ${d!.suspectBelow}, ${d!.cycleLimit})</span>`
            : '');
    byLab.set(cutoff.labName, [...(byLab.get(cutoff.labName) ?? []), text]);
  }
  const cutoffs = [...byLab.entries()]
    .map(([lab, texts]) => `<li data-cutoffs-of="${escapeHtml(lab)}">${escapeHtml(lab)}: ${texts.join('; ')}</li>`)
    .join('');
  return (
    `<h2>Where the results came from</h2>` +
    `<table data-sources=""><thead><tr><th>Lab</th><th>Reported</th><th>Case numbers</th><th>Collected</th><th>Barns</th><th>Assays</th><th class="num">Results</th></tr></thead><tbody>${rows}</tbody></table>` +
    (cutoffs
      ? `<p>Each result is read with the cutoffs of the lab that reported it:</p><ul data-cutoffs="">${cutoffs}</ul>`
      : '') +
    (summary.disagreements.length === 0
      ? `<p class="muted">No result this round has a lab call that differs from its reading.</p>`
      : '')
  );
}

/**
 * Case numbers in short: runs of consecutive numbers with the same prefix and width collapse to
 * "first to last" (NV26-01000 to NV26-01017); the rest are listed.
 */
export function caseList(accessions: readonly string[]): string {
  const parsed = [...new Set(accessions)].sort().map((text) => {
    const match = /^(.*?)(\d+)$/.exec(text);
    return match
      ? { text, prefix: match[1]!, digits: match[2]!.length, value: Number(match[2]) }
      : { text, prefix: null, digits: 0, value: Number.NaN };
  });
  const out: string[] = [];
  for (let i = 0; i < parsed.length; ) {
    let j = i;
    const first = parsed[i]!;
    while (
      first.prefix !== null &&
      j + 1 < parsed.length &&
      parsed[j + 1]!.prefix === first.prefix &&
      parsed[j + 1]!.digits === first.digits &&
      parsed[j + 1]!.value === parsed[j]!.value + 1
    ) {
      j++;
    }
    out.push(
      j - i >= 2
        ? `${first.text} to ${parsed[j]!.text}`
        : parsed
            .slice(i, j + 1)
            .map((entry) => entry.text)
            .join(', '),
    );
    i = j + 1;
  }
  return out.join(', ');
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
    (input.since ? sinceBlock(summary, input.since) : '') +
    disagreementsBlock(summary) +
    replacedBlock(summary) +
    stateBlock(summary) +
    `<h2>Site</h2><p class="explain">${confidenceSentence(summary.program.designPrevalence, summary.program.targetConfidence)}</p>${siteTable(summary)}` +
    `<h2>Barns <small data-target-key="" style="font-weight:400">\u2014 detection <span class="below">&nbsp;shaded&nbsp;</span>: below target, ropes missing or invalid; unshaded: as sized</small></h2>` +
    `${summary.barns.map((barn) => barnBlock(summary, barn)).join('')}` +
    sourcesBlock(summary);
  return renderPage({
    title: `${summary.site.name}, round ${round.number}: summary`,
    heading: `${summary.site.name}: round ${round.number} summary`,
    subheading: `Round ${escapeHtml(round.id)}, ropes ${escapeHtml(round.startOn)} to ${escapeHtml(round.endOn)} (round ${round.number} on this site). Design prevalence ${escapeHtml(summary.program.designPrevalence)}, target ${pct(summary.program.targetConfidence)} per barn.`,
    notices: input.notices,
    nav: [
      { href: '../../index.html', label: 'All sites' },
      { href: 'clusters.html', label: 'Cluster review (vet)' },
      { href: '../next-round.html', label: 'Next round rope sheet' },
      { href: '../plan.html', label: 'Plan and its reasoning' },
    ],
    body,
    herdStatus: input.herdStatus,
  });
}
