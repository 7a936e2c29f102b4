/**
 * One barn of the site round summary: ropes hung and returned, results by class, detection
 * confidence against the target, the prevalence estimate, the pens with a finding, PCR and
 * antibody side by side, and the fix for results refused under a mistyped ID.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import { EMPTY_BARN, groupText } from '../groupText.js';
import { correctionsEntry, ingestAgainCommand, MISTYPED_ACTION, refusalGroups, simplyMissing } from '../roundNotes.js';
import { escapeHtml } from './escape.js';
import { count, pct } from './page.js';
import { cutoffText, hasAntibody, mixedReadings, type PenResult, valueCell } from './resultCells.js';

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

type SummaryBarn = RoundSummary['barns'][number];

/** One assay's row of a barn: counts by class, the pens with a finding, detection against the target, prevalence. */
function assayRow(summary: RoundSummary, tally: SummaryBarn['assays'][number], notBack: number): string {
  const c = tally.confidence;
  const against = againstTarget(tally, notBack, summary.program.targetConfidence);
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
    (tally.positivePoolPens ?? []).length > 0 ? `positive pool: ${escapeHtml(tally.positivePoolPens!.join(', '))}` : '',
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
}

/** An empty barn: between a group's close-out and the next placement there are no pigs; no figure, nothing missing, not a missed round. */
function emptyBarn(barn: SummaryBarn, heading: string): string {
  return (
    `<section class="barn" data-barn="${escapeHtml(barn.barnId)}" data-empty="">${heading}` +
    `<p>${escapeHtml(EMPTY_BARN[0]!.toUpperCase() + EMPTY_BARN.slice(1))} this round: the barn was emptied and not yet restocked, so there was nothing to find. No detection figure; ropes not hung here are not missing, and the round is not a missed round for this barn.` +
    (barn.ropesHung > 0
      ? ` ${count(barn.ropesHung, 'rope')} hung here anyway: check the group’s dates in sites.yaml.`
      : '') +
    `</p></section>`
  );
}

/** The freedom of a barn run by groups is of its current group: it restarted from the prior at the placement. */
function groupFreedom(barn: SummaryBarn): string {
  if (barn.group === null) return '';
  const perAssay = barn.assays
    .map(
      (tally) =>
        `${escapeHtml(tally.assayId)} ${tally.confidence.freedom === null ? 'n/a' : pct(tally.confidence.freedom)}${tally.confidence.freedomRestart ? ' (first round of the group: started from the prior)' : ''}`,
    )
    .join('; ');
  return `<p data-group-freedom="${escapeHtml(barn.group.id)}">Probability of freedom of this group so far: ${perAssay}. Rounds of earlier groups do not count: their pigs have left.</p>`;
}

/** The barn's ropes in one line: pens in use, hung, returned, missing or awaiting, refused under a mistyped ID. */
function ropesLine(summary: RoundSummary, barn: SummaryBarn, missingIds: readonly string[]): string {
  const missing = missingIds.length;
  const mistyped = barn.mistyped.length;
  const refused = new Set(barn.mistyped.map((rope) => rope.sampleId));
  const awaiting = barn.awaitingSampleIds.filter((sampleId) => !refused.has(sampleId)).length;
  return (
    `<p>${count(barn.pensInUse, 'pen')} in use; ${count(barn.ropesHung, 'rope')} hung, ${barn.ropesReturned} returned` +
    (missing > 0
      ? `; <strong>${count(missing, 'rope')} missing</strong>: ${escapeHtml(missingIds.join(', '))}`
      : awaiting > 0
        ? `; ${awaiting} awaiting results, due by ${escapeHtml(summary.round.resultsDueOn)}`
        : '; none missing') +
    (mistyped > 0
      ? `; <strong>${count(mistyped, 'result')} refused under a mistyped ID</strong> (pen ${escapeHtml(barn.mistyped.map((rope) => rope.penId).join(', '))}; not missing, not counted)`
      : '') +
    `.</p>`
  );
}

/** One barn's section of the summary page. */
export function barnBlock(summary: RoundSummary, barn: SummaryBarn): string {
  const group = groupText(barn);
  const heading = `<h3>${escapeHtml(barn.name)} (${escapeHtml(barn.barnId)})${group === '' ? '' : `: ${escapeHtml(group)}`}</h3>`;
  if (barn.empty) return emptyBarn(barn, heading);
  const missingIds = simplyMissing(barn);
  const notBack = missingIds.length + barn.mistyped.length;
  const rows = barn.assays.map((tally) => assayRow(summary, tally, notBack)).join('');
  return (
    `<section class="barn" data-barn="${escapeHtml(barn.barnId)}"${barn.group === null ? '' : ` data-group="${escapeHtml(barn.group.id)}"`}>${heading}` +
    ropesLine(summary, barn, missingIds) +
    `<table><thead><tr><th>Assay</th><th class="num">Tested</th><th class="num">Positive</th><th class="num">Suspect</th><th class="num">Negative</th><th class="num">Invalid</th><th>Pens (+ positive, ? suspect, \u00d7 invalid)</th>` +
    `<th class="num">Detection confidence (target ${pct(summary.program.targetConfidence)})</th><th>Against target</th><th>Prevalence estimate</th></tr></thead><tbody>${rows}</tbody></table>${groupFreedom(barn)}${findingsTable(summary, barn.barnId)}${pairsTable(summary, barn.barnId)}${mistypedFix(barn)}</section>`
  );
}
