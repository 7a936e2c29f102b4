/**
 * The veterinarian's status of a herd, shown at the top of every page of its site beside what the
 * numbers of a round say: the categorical judgement of a person and the counts and probabilities
 * of the program are two different things, and a reader should see both side by side.
 */
import type { RoundSummary } from '../../analysis/roundSummary.js';
import type { HerdStatus } from '../../config/types.js';
import { escapeHtml } from './escape.js';
import { pct } from './page.js';
import { siteTally } from '../siteTally.js';

/** What one round's numbers say, per assay, in one plain sentence each. */
export function numbersSay(summary: RoundSummary): string[] {
  return summary.assays.map((assay) => {
    const { tested, positive } = siteTally(summary, assay.id);
    const barns = assay.site.positiveBarns;
    const found =
      positive > 0
        ? `${positive} positive of ${tested} tested rope${tested === 1 ? '' : 's'} (barn${barns.length === 1 ? '' : 's'} ${barns.join(', ')})`
        : `no positive in ${tested} tested rope${tested === 1 ? '' : 's'}`;
    const freedom = assay.measure === 'sp-ratio' ? 'probability of freedom from exposure' : 'probability of freedom';
    // A site positive for a PCR assay is not free: its status, not a probability, is what the numbers say.
    const standing =
      assay.site.status?.state === 'positive'
        ? `positive since round ${assay.site.status.sinceRound}`
        : `${freedom} ${pct(assay.site.freedom)}`;
    return `${assay.name}: ${found}; detection confidence ${pct(assay.site.detectionConfidence)}, ${standing}.`;
  });
}

/** When the status was set against the round: before its first rope, during it, or after its last. */
function setWhen(status: HerdStatus, summary: RoundSummary): string {
  if (status.setOn < summary.round.startOn) return 'before this round';
  if (status.setOn > summary.round.endOn) return 'after this round';
  return 'during this round';
}

/**
 * The herd-status block of a page: the veterinarian's category, the day it was set and the note,
 * then what the numbers of `summary` say (nothing of them when the site has no round yet).
 * Empty when the site has no herd status configured.
 */
export function herdStatusBlock(status: HerdStatus | undefined, summary: RoundSummary | undefined): string {
  if (status === undefined) return '';
  const when = summary === undefined ? '' : ` (${setWhen(status, summary)})`;
  const note = status.note === undefined ? '' : ` ${escapeHtml(status.note)}`;
  const numbers =
    summary === undefined
      ? 'No round results yet.'
      : `Round ${summary.round.number} (${escapeHtml(summary.round.startOn)} to ${escapeHtml(summary.round.endOn)}): ${numbersSay(summary).map(escapeHtml).join(' ')}`;
  return (
    `<section class="explain" data-herd-status="${escapeHtml(status.category)}">` +
    `<p><strong>Herd status (veterinarian):</strong> <span data-herd-category="">${escapeHtml(status.category)}</span>, set on ${escapeHtml(status.setOn)}${when}.${note}</p>` +
    `<p><strong>What the numbers say:</strong> ${numbers}</p></section>`
  );
}
