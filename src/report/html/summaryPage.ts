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
import { EMPTY_BARN, groupText } from '../groupText.js';
import {
  correctionsEntry,
  ingestAgainCommand,
  MISTYPED_ACTION,
  readingText,
  refusalGroups,
  replacementWhy,
  reportDates,
  simplyMissing,
} from '../roundNotes.js';

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
  const hung = summary.barns.reduce((sum, barn) => sum + barn.ropesHung, 0);
  const returned = summary.barns.reduce((sum, barn) => sum + barn.ropesReturned, 0);
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

type PenResult = RoundSummary['pens'][number]['results'][string];

/**
 * The cutoffs a result was read with, in short: "positive below 36, suspect below 40, cycle
 * limit 40"; for an antibody result "positive at S/P ≥ 0.4, suspect from 0.3".
 */
export function cutoffText(
  result: Pick<PenResult, 'positiveBelow' | 'suspectBelow' | 'cycleLimit'> &
    Partial<Pick<PenResult, 'measure' | 'positiveAtOrAbove' | 'suspectAtOrAbove'>>,
): string {
  if (result.measure === 'sp-ratio') {
    return [
      result.positiveAtOrAbove === null || result.positiveAtOrAbove === undefined
        ? ''
        : `positive at S/P \u2265 ${result.positiveAtOrAbove}`,
      result.suspectAtOrAbove === null || result.suspectAtOrAbove === undefined
        ? ''
        : `suspect from ${result.suspectAtOrAbove}`,
    ]
      .filter((part) => part !== '')
      .join(', ');
  }
  const parts = [
    result.positiveBelow === null ? '' : `positive below ${result.positiveBelow}`,
    result.suspectBelow === null ? '' : `suspect below ${result.suspectBelow}`,
    result.cycleLimit === null ? '' : `cycle limit ${result.cycleLimit}`,
  ];
  return parts.filter((part) => part !== '').join(', ');
}

const ctCell = (ct: number | null, resultClass: string) =>
  resultClass === 'invalid' ? 'invalid' : ct === null ? 'n.d.' : String(ct);

/** The value cell of a result: its Ct (n.d. when not detected), or "S/P 0.52" for an antibody result. */
const valueCell = (result: { measure?: string; ct: number | null; sp?: number | null; resultClass: string }) =>
  result.measure === 'sp-ratio'
    ? result.resultClass === 'invalid' || result.sp === null || result.sp === undefined
      ? 'invalid'
      : `S/P ${result.sp}`
    : ctCell(result.ct, result.resultClass);

/** The round has an antibody assay: value columns hold a Ct or an S/P. */
const hasAntibody = (summary: RoundSummary) => summary.assays.some((assay) => assay.measure === 'sp-ratio');

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
          const call =
            result.labCall === null
              ? '<span class="muted">none</span>'
              : `${escapeHtml(result.labCall)}${result.callDiffers ? ' <strong>(differs)</strong>' : ''}`;
          return (
            `<tr data-pen="${escapeHtml(pen.penId)}" data-assay="${escapeHtml(assayId)}"><td>${escapeHtml(pen.penId)}</td><td>${escapeHtml(assayId)}</td><td>${escapeHtml(result.sampleId)}</td>` +
            `<td class="num">${valueCell(result)}</td><td>${result.pool !== undefined && result.pool.poolClass === 'positive' && result.resultClass === 'suspect' ? `positive pool ${escapeHtml(result.pool.poolId)}: retest on its own` : `${escapeHtml(result.resultClass)}${result.pool !== undefined ? ` (pool ${escapeHtml(result.pool.poolId)})` : ''}`}${result.sequencingCandidate ? ', sequencing candidate' : ''}</td><td>${call}</td>` +
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
      .map(
        (group) =>
          `${escapeHtml(group.written)} (${escapeHtml(group.fileName)}, line${group.lines.length === 1 ? '' : 's'} ${group.lines.join(', ')})`,
      )
      .join(' and ');
    rows.push(
      `<tr data-pen="${escapeHtml(rope.penId)}" data-mistyped="${escapeHtml(rope.sampleId)}"><td>${escapeHtml(rope.penId)}</td><td class="muted">\u2014</td><td>${escapeHtml(rope.sampleId)}</td>` +
        `<td class="num muted">\u2014</td><td><strong>result refused: mistyped ID?</strong></td>` +
        `<td colspan="${mixed ? 3 : 2}">written ${written}; most likely meant ${escapeHtml(rope.sampleId)}</td></tr>`,
    );
  }
  if (rows.length === 0) return '';
  return (
    `<table data-findings=""><thead><tr><th>Pen</th><th>Assay</th><th>Sample</th><th class="num">${hasAntibody(summary) ? 'Ct or S/P' : 'Ct'}</th><th>Reading</th><th>Lab\u2019s call</th><th>Lab case</th>` +
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
 * What a pen's PCR and antibody results say together, in the vet's words: virus now, antibody
 * from exposure a while back (common practice, no source; the herd's veterinarian interprets).
 */
export function pairReading(
  pcr: Pick<PenResult, 'resultClass'> | undefined,
  antibody: Pick<PenResult, 'resultClass'> | undefined,
): string {
  const p = pcr?.resultClass;
  const a = antibody?.resultClass;
  if (p === 'invalid' || a === 'invalid' || p === 'suspect' || a === 'suspect')
    return 'a suspect or invalid result: retest before reading the pair';
  if (p === 'positive' && a === 'positive') return 'virus and antibody: an infection under way, antibody already up';
  if (p === 'positive')
    return a === undefined ? 'virus; antibody not tested' : 'virus, no antibody yet: likely an early infection';
  if (a === 'positive')
    return p === undefined
      ? 'antibody, no PCR result: exposure; retest the pen by PCR'
      : 'antibody without virus: earlier exposure (or vaccination); no virus found now';
  return 'neither virus nor antibody';
}

/**
 * Per antibody assay paired with a PCR assay (assays.yaml pairedWith): the pens of a barn with a
 * finding in either, both results side by side.
 */
function pairsTable(summary: RoundSummary, barnId: string): string {
  return summary.pairs
    .map((pair) => {
      const rows = summary.pens
        .filter((pen) => pen.barnId === barnId)
        .filter((pen) =>
          [pen.results[pair.pcr], pen.results[pair.antibody]].some(
            (result) => result !== undefined && result.resultClass !== 'negative',
          ),
        )
        .map((pen) => {
          const pcr = pen.results[pair.pcr];
          const antibody = pen.results[pair.antibody];
          const cell = (result: PenResult | undefined) =>
            result === undefined
              ? '<span class="muted">not tested</span>'
              : `${valueCell(result)} (${escapeHtml(result.resultClass)})`;
          return `<tr data-pair-pen="${escapeHtml(pen.penId)}"><td>${escapeHtml(pen.penId)}</td><td>${cell(pcr)}</td><td>${cell(antibody)}</td><td>${escapeHtml(pairReading(pcr, antibody))}</td></tr>`;
        });
      if (rows.length === 0)
        return `<p class="muted" data-pairs="${escapeHtml(pair.antibody)}">${escapeHtml(pair.pcr)} and ${escapeHtml(pair.antibody)}: no pen with virus or antibody this round.</p>`;
      return (
        `<table data-pairs="${escapeHtml(pair.antibody)}"><thead><tr><th>Pen</th><th>${escapeHtml(pair.pcr)} (PCR, Ct)</th><th>${escapeHtml(pair.antibody)} (antibody, S/P)</th><th>Together</th></tr></thead>` +
        `<tbody>${rows.join('')}</tbody></table>`
      );
    })
    .join('');
}

/**
 * A barn's detection confidence against the target, in three states: met; below target because
 * ropes were lost (missing, refused under a mistyped ID, or invalid for the assay): something to
 * act on, shaded; below target with every rope hung counted: as the round was sized (a site
 * budget, a barn too small for one round), not shaded.
 * @param tally the barn's tally of one assay with its confidence
 * @param notBack ropes of the barn without a counted result (missing and mistyped)
 * @param target the program's target confidence
 */
export function againstTarget(
  tally: Pick<RoundSummary['barns'][number]['assays'][number], 'invalid' | 'confidence'>,
  notBack: number,
  target: number,
): { state: 'met' | 'lost' | 'as-sized'; text: string } {
  const c = tally.confidence;
  if (c.detectionConfidence >= target) return { state: 'met', text: 'target met' };
  const reach = c.targetReachable
    ? `${c.ropesNeeded ?? 'n/a'} valid ropes would reach it`
    : `one round cannot reach it (best ${pct(c.censusConfidence)}); ${c.roundsNeededIfUnreachable ?? 'n/a'} rounds would`;
  const lost = notBack + tally.invalid;
  if (lost > 0) {
    const what = [
      notBack > 0 ? `${count(notBack, 'rope')} without a result` : '',
      tally.invalid > 0 ? `${tally.invalid} invalid` : '',
    ]
      .filter((text) => text !== '')
      .join(', ');
    return { state: 'lost', text: `ropes lost (${what}): ${reach}` };
  }
  return { state: 'as-sized', text: `as sized: ${reach}` };
}

function barnBlock(summary: RoundSummary, barn: RoundSummary['barns'][number]): string {
  const target = summary.program.targetConfidence;
  const missingIds = simplyMissing(barn);
  const missing = missingIds.length;
  const mistyped = barn.mistyped.length;
  const refused = new Set(barn.mistyped.map((rope) => rope.sampleId));
  const awaiting = barn.awaitingSampleIds.filter((sampleId) => !refused.has(sampleId)).length;
  const rows = barn.assays
    .map((tally) => {
      const c = tally.confidence;
      const against = againstTarget(tally, missing + mistyped, target);
      // A positive barn is monitored, not surveyed: a detection target at the design prevalence says nothing there.
      const monitored = c.status?.state === 'positive';
      const met = against.state === 'met';
      const need =
        c.status?.state === 'positive'
          ? `<strong data-status="positive">positive</strong> since round ${c.status.sinceRound}: monitored (${c.status.negativeRoundsInARow} of ${summary.program.clearAfterNegativeRounds} negative rounds in a row to clear)`
          : escapeHtml(against.text);
      const prevalence = c.prevalence
        ? `${pct(c.prevalence.apparent)} of tested pens (95% CI ${pct(c.prevalence.lower95)}\u2013${pct(c.prevalence.upper95)}); corrected for rope sensitivity ${c.sensitivity}: ${pct(c.prevalence.trueEstimate)}${c.prevalence.note ? ` (${escapeHtml(c.prevalence.note)})` : ''}`
        : '<span class="muted">no positives</span>';
      const pooled = c.pooled;
      const poolNote = pooled
        ? `<br><span class="muted" data-pooled="">${count(pooled.pools, 'pool')} (pool sensitivity ${pooled.poolSensitivity}); ${pct(pooled.unpooledDetectionConfidence)} had each pen been tested on its own</span>`
        : '';
      const pens = [
        tally.positivePens.length > 0 ? `+ ${escapeHtml(tally.positivePens.join(', '))}` : '',
        (tally.positivePoolPens ?? []).length > 0
          ? `positive pool: ${escapeHtml(tally.positivePoolPens!.join(', '))}`
          : '',
        tally.suspectPens.length > 0 ? `? ${escapeHtml(tally.suspectPens.join(', '))}` : '',
        tally.invalidPens.length > 0 ? `\u00d7 ${escapeHtml(tally.invalidPens.join(', '))}` : '',
      ]
        .filter((text) => text !== '')
        .join('<br>');
      return (
        `<tr data-assay="${escapeHtml(tally.assayId)}"><td>${escapeHtml(tally.assayId)}${c.measure === 'sp-ratio' ? ' <span class="muted">(antibody: exposure)</span>' : ''}</td><td class="num">${tally.tested}</td><td class="num">${tally.positive}</td><td class="num">${tally.suspect}</td><td class="num">${tally.negative}</td><td class="num">${tally.invalid}</td>` +
        `<td>${pens || '<span class="muted">none</span>'}</td>` +
        `<td class="num${met ? ' met' : against.state === 'lost' && !monitored ? ' below' : ''}" data-against="${monitored ? 'monitored' : against.state}">${pct(c.detectionConfidence)}${poolNote}</td><td>${need}</td><td>${prevalence}</td></tr>`
      );
    })
    .join('');
  const group = groupText(barn);
  const heading = `<h3>${escapeHtml(barn.name)} (${escapeHtml(barn.barnId)})${group === '' ? '' : `: ${escapeHtml(group)}`}</h3>`;
  if (barn.empty) {
    // Between a group's close-out and the next placement there are no pigs: no figure, nothing missing, not a missed round.
    return (
      `<section class="barn" data-barn="${escapeHtml(barn.barnId)}" data-empty="">${heading}` +
      `<p>${escapeHtml(EMPTY_BARN[0]!.toUpperCase() + EMPTY_BARN.slice(1))} this round: the barn was emptied and not yet restocked, so there was nothing to find. No detection figure; ropes not hung here are not missing, and the round is not a missed round for this barn.` +
      (barn.ropesHung > 0
        ? ` ${count(barn.ropesHung, 'rope')} hung here anyway: check the group’s dates in sites.yaml.`
        : '') +
      `</p></section>`
    );
  }
  // The freedom of a barn run by groups is of its current group: it restarted from the prior at the placement.
  const groupFreedom =
    barn.group === null
      ? ''
      : `<p data-group-freedom="${escapeHtml(barn.group.id)}">Probability of freedom of this group so far: ${barn.assays
          .map(
            (tally) =>
              `${escapeHtml(tally.assayId)} ${tally.confidence.freedom === null ? 'n/a' : pct(tally.confidence.freedom)}${tally.confidence.freedomRestart ? ' (first round of the group: started from the prior)' : ''}`,
          )
          .join('; ')}. Rounds of earlier groups do not count: their pigs have left.</p>`;
  return (
    `<section class="barn" data-barn="${escapeHtml(barn.barnId)}"${barn.group === null ? '' : ` data-group="${escapeHtml(barn.group.id)}"`}>${heading}` +
    `<p>${count(barn.pensInUse, 'pen')} in use; ${count(barn.ropesHung, 'rope')} hung, ${barn.ropesReturned} returned` +
    (missing > 0
      ? `; <strong>${count(missing, 'rope')} missing</strong>: ${escapeHtml(missingIds.join(', '))}`
      : awaiting > 0
        ? `; ${awaiting} awaiting results, due by ${escapeHtml(summary.round.resultsDueOn)}`
        : '; none missing') +
    (mistyped > 0
      ? `; <strong>${count(mistyped, 'result')} refused under a mistyped ID</strong> (pen ${escapeHtml(barn.mistyped.map((rope) => rope.penId).join(', '))}; not missing, not counted)`
      : '') +
    `.</p>` +
    `<table><thead><tr><th>Assay</th><th class="num">Tested</th><th class="num">Positive</th><th class="num">Suspect</th><th class="num">Negative</th><th class="num">Invalid</th><th>Pens (+ positive, ? suspect, \u00d7 invalid)</th>` +
    `<th class="num">Detection confidence (target ${pct(target)})</th><th>Against target</th><th>Prevalence estimate</th></tr></thead><tbody>${rows}</tbody></table>${groupFreedom}${findingsTable(summary, barn.barnId)}${pairsTable(summary, barn.barnId)}${mistypedFix(barn)}</section>`
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
    subheading: `Round ${escapeHtml(round.id)}, ropes ${escapeHtml(round.startOn)} to ${escapeHtml(round.endOn)} (round ${round.number} of ${round.roundsOnSite} on this site). Design prevalence ${escapeHtml(summary.program.designPrevalence)}, target ${pct(summary.program.targetConfidence)} per barn.`,
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
