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
import type { PageAlert } from './alerts.js';
import { escapeHtml } from './escape.js';
import { confidenceSentence, count, pct, renderPage } from './page.js';
import { correctionsEntry, ingestAgainCommand, MISTYPED_ACTION, readingText, refusalGroups, replacementWhy, reportDates, simplyMissing } from '../roundNotes.js';

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

type PenResult = RoundSummary['pens'][number]['results'][string];

/** The cutoffs a result was read with, in short: "+ below 36, ? below 40, limit 40". */
export function cutoffText(result: Pick<PenResult, 'positiveBelow' | 'suspectBelow' | 'cycleLimit'>): string {
  const parts = [
    result.positiveBelow === null ? '' : `positive below ${result.positiveBelow}`,
    result.suspectBelow === null ? '' : `suspect below ${result.suspectBelow}`,
    `cycle limit ${result.cycleLimit}`,
  ];
  return parts.filter((part) => part !== '').join(', ');
}

const ctCell = (ct: number | null, resultClass: string) => (resultClass === 'invalid' ? 'invalid' : ct === null ? 'n.d.' : String(ct));

/**
 * The results of a round were not all read alike: more than one lab, or one lab with more than
 * one set of cutoffs for an assay. Then each finding names its lab and cutoffs; otherwise the
 * one set is named once, under "Where the results came from".
 */
export function mixedReadings(summary: RoundSummary): boolean {
  const labs = new Set(summary.cutoffs.map((cutoff) => cutoff.labId));
  const assays = new Set(summary.cutoffs.map((cutoff) => cutoff.assayId));
  return labs.size > 1 || summary.cutoffs.length > assays.size;
}

/**
 * The pens of a barn with something to act on (positive, suspect, invalid, or a lab call that
 * differs), with the lab's case number, and the lab and cutoffs when the round mixes readings.
 */
function findingsTable(summary: RoundSummary, barnId: string): string {
  const mixed = mixedReadings(summary);
  const rows = summary.pens
    .filter((pen) => pen.barnId === barnId)
    .flatMap((pen) =>
      Object.entries(pen.results)
        .filter(([, result]) => result.resultClass !== 'negative' || result.callDiffers)
        .map(([assayId, result]) => {
          const call = result.labCall === null ? '<span class="muted">none</span>' : `${escapeHtml(result.labCall)}${result.callDiffers ? ' <strong>(differs)</strong>' : ''}`;
          return (
            `<tr data-pen="${escapeHtml(pen.penId)}" data-assay="${escapeHtml(assayId)}"><td>${escapeHtml(pen.penId)}</td><td>${escapeHtml(assayId)}</td><td>${escapeHtml(result.sampleId)}</td>` +
            `<td class="num">${ctCell(result.ct, result.resultClass)}</td><td>${escapeHtml(result.resultClass)}${result.sequencingCandidate ? ', sequencing candidate' : ''}</td><td>${call}</td>` +
            `<td>${escapeHtml(result.accession ?? '')}</td>` +
            (mixed ? `<td>${escapeHtml(result.labName)}: ${escapeHtml(cutoffText(result))}</td>` : '') +
            `</tr>`
          );
        }),
    );
  // A planned rope whose result was refused under a mistyped ID: named, never shown as missing.
  const barn = summary.barns.find((entry) => entry.barnId === barnId);
  for (const rope of barn?.mistyped ?? []) {
    const written = refusalGroups(rope)
      .map((group) => `${escapeHtml(group.written)} (${escapeHtml(group.fileName)}, line${group.lines.length === 1 ? '' : 's'} ${group.lines.join(', ')})`)
      .join(' and ');
    rows.push(
      `<tr data-pen="${escapeHtml(rope.penId)}" data-mistyped="${escapeHtml(rope.sampleId)}"><td>${escapeHtml(rope.penId)}</td><td class="muted">\u2014</td><td>${escapeHtml(rope.sampleId)}</td>` +
        `<td class="num muted">\u2014</td><td><strong>result refused: mistyped ID?</strong></td>` +
        `<td colspan="${mixed ? 3 : 2}">written ${written}; most likely meant ${escapeHtml(rope.sampleId)}</td></tr>`,
    );
  }
  if (rows.length === 0) return '';
  return (
    `<table data-findings=""><thead><tr><th>Pen</th><th>Assay</th><th>Sample</th><th class="num">Ct</th><th>Reading</th><th>Lab\u2019s call</th><th>Lab case</th>` +
    (mixed ? '<th>Read with (lab: cutoffs)</th>' : '') +
    `</tr></thead><tbody>${rows.join('')}</tbody></table>`
  );
}

/** Every sample of the round whose lab call differs from its reading, with both readings. */
function disagreementsBlock(summary: RoundSummary): string {
  if (summary.disagreements.length === 0) return '';
  const rows = summary.disagreements
    .map(
      (entry) =>
        `<tr data-disagreement="${escapeHtml(entry.sampleId)}"><td>${escapeHtml(entry.barnId)} ${escapeHtml(entry.penId)}</td><td>${escapeHtml(entry.sampleId)}</td><td>${escapeHtml(entry.assayId)}</td>` +
        `<td class="num">${escapeHtml(entry.ctRaw ?? ctCell(entry.ct, entry.resultClass))}</td><td><strong>${escapeHtml(entry.labCall)}</strong></td>` +
        `<td><strong>${escapeHtml(entry.resultClass)}</strong>: ${escapeHtml(entry.reason)}${entry.standsForPen ? '' : ' (a second rope of the pen; another result stands for it)'}</td>` +
        `<td>${escapeHtml(entry.labName)}${entry.accession ? `, case ${escapeHtml(entry.accession)}` : ''}</td></tr>`,
    )
    .join('');
  return (
    `<h2>Lab call and reading disagree</h2><p>For these samples the lab\u2019s own call names another class than the lab\u2019s cutoffs in the configuration give for the Ct it reported. ` +
    `ropewatch counts the reading from the cutoffs; check the cutoffs in the lab profile against the lab\u2019s report, and ask the lab when they agree.</p>` +
    `<table data-disagreements="${summary.disagreements.length}"><thead><tr><th>Pen</th><th>Sample</th><th>Assay</th><th class="num">Ct as reported</th><th>Lab\u2019s call</th><th>ropewatch reading</th><th>Lab, case</th></tr></thead><tbody>${rows}</tbody></table>`
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

/** What to do about a barn's results refused under a mistyped ID, with the line to add and the command. */
function mistypedFix(barn: RoundSummary['barns'][number]): string {
  if (barn.mistyped.length === 0) return '';
  const steps = barn.mistyped.flatMap((rope) =>
    refusalGroups(rope).map(
      (group) =>
        `<li data-fix="${escapeHtml(rope.sampleId)}">pen ${escapeHtml(rope.penId)}: if the tube is ${escapeHtml(rope.sampleId)}, add <code>${escapeHtml(correctionsEntry(group.written, rope.sampleId, group.fileName))}</code> under <code>sampleIds:</code>, then run <code>${escapeHtml(ingestAgainCommand(group.fileName))}</code></li>`,
    ),
  );
  return `<p>Result refused under a mistyped ID: ${escapeHtml(MISTYPED_ACTION)}:</p><ul data-mistyped-fix="${escapeHtml(barn.barnId)}">${steps.join('')}</ul>`;
}

/** A date, or "first to last" when they differ. */
const span = (first: string | null, last: string | null) => (first === null || last === null ? (first ?? last ?? 'not given') : first === last ? first : `${first} to ${last}`);

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
    const differs = d !== null && (d.positiveBelow !== cutoff.positiveBelow || d.suspectBelow !== cutoff.suspectBelow || d.cycleLimit !== cutoff.cycleLimit);
    const text =
      `${escapeHtml(cutoff.assayId)} positive below ${cutoff.positiveBelow}, suspect below ${cutoff.suspectBelow}, cycle limit ${cutoff.cycleLimit}` +
      (differs ? ` <span class="muted">(the lab\u2019s own; assays.yaml default ${d!.positiveBelow}, ${d!.suspectBelow}, ${d!.cycleLimit})</span>` : '');
    byLab.set(cutoff.labName, [...(byLab.get(cutoff.labName) ?? []), text]);
  }
  const cutoffs = [...byLab.entries()].map(([lab, texts]) => `<li data-cutoffs-of="${escapeHtml(lab)}">${escapeHtml(lab)}: ${texts.join('; ')}</li>`).join('');
  return (
    `<h2>Where the results came from</h2>` +
    `<table data-sources=""><thead><tr><th>Lab</th><th>Reported</th><th>Case numbers</th><th>Collected</th><th>Barns</th><th>Assays</th><th class="num">Results</th></tr></thead><tbody>${rows}</tbody></table>` +
    (cutoffs ? `<p>Each result is read with the cutoffs of the lab that reported it:</p><ul data-cutoffs="">${cutoffs}</ul>` : '') +
    (summary.disagreements.length === 0 ? `<p class="muted">No result this round has a lab call that differs from its reading.</p>` : '')
  );
}

/**
 * Case numbers in short: runs of consecutive numbers with the same prefix and width collapse to
 * "first to last" (NV26-01000 to NV26-01017); the rest are listed.
 */
export function caseList(accessions: readonly string[]): string {
  const parsed = [...new Set(accessions)].sort().map((text) => {
    const match = /^(.*?)(\d+)$/.exec(text);
    return match ? { text, prefix: match[1]!, digits: match[2]!.length, value: Number(match[2]) } : { text, prefix: null, digits: 0, value: Number.NaN };
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
    out.push(j - i >= 2 ? `${first.text} to ${parsed[j]!.text}` : parsed.slice(i, j + 1).map((entry) => entry.text).join(', '));
    i = j + 1;
  }
  return out.join(', ');
}

function barnBlock(summary: RoundSummary, barn: RoundSummary['barns'][number]): string {
  const target = summary.program.targetConfidence;
  const missingIds = simplyMissing(barn);
  const missing = missingIds.length;
  const mistyped = barn.mistyped.length;
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
    (missing > 0 ? `; <strong>${count(missing, 'rope')} missing</strong>: ${escapeHtml(missingIds.join(', '))}` : '; none missing') +
    (mistyped > 0 ? `; <strong>${count(mistyped, 'result')} refused under a mistyped ID</strong> (pen ${escapeHtml(barn.mistyped.map((rope) => rope.penId).join(', '))}; not missing, not counted)` : '') +
    `.</p>` +
    `<table><thead><tr><th>Assay</th><th class="num">Tested</th><th class="num">Positive</th><th class="num">Suspect</th><th class="num">Negative</th><th class="num">Invalid</th><th>Pens (+ positive, ? suspect, \u00d7 invalid)</th>` +
    `<th class="num">Detection confidence (target ${pct(target)})</th><th>Against target</th><th>Prevalence estimate</th></tr></thead><tbody>${rows}</tbody></table>${findingsTable(summary, barn.barnId)}${mistypedFix(barn)}</section>`
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
    disagreementsBlock(summary) +
    replacedBlock(summary) +
    `<h2>Site</h2><p class="explain">${confidenceSentence(summary.program.designPrevalence, summary.program.targetConfidence)}</p>${siteTable(summary)}` +
    `<h2>Barns</h2>${summary.barns.map((barn) => barnBlock(summary, barn)).join('')}` +
    sourcesBlock(summary);
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
