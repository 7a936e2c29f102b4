/**
 * What each round's model is made of, as a key: a round whose key is the one its model was
 * cached under is the same round, so a build re-forms only the rounds from the first whose key
 * changed, and reads only their results. Pure.
 *
 * A round's model reads its own ropes, the reports of their samples and pools (their values, and
 * which replaced which), the planned ropes without a result whose due date falls in it, the
 * refusals under a mistyped ID, the site's configuration and whether its results are due by the
 * day of the build (roundState). The key covers each of them: the ropes whole, the reports of each
 * sample by their count, the newest id and the count replaced (reports and links are never
 * changed in place, only added), the planned ropes whole. Refusals under a mistyped ID are few and tied to planned
 * ropes rather than rounds: every key covers all of them.
 */
import { createHash } from 'node:crypto';
import type { Site } from '../config/types.js';
import type { SiteOutline } from '../domain/store.js';
import { plannedByRound } from './missingRopes.js';
import { formRounds, resultsDueOn } from './rounds.js';

/** One round as its key sees it. */
export interface RoundKey {
  /** The round's folder name (number and first day). */
  id: string;
  startOn: string;
  endOn: string;
  key: string;
  /** The sample IDs whose results the round reads: its ropes' and their pools'. */
  sampleIds: string[];
}

const sha256 = (text: string): string => createHash('sha256').update(text).digest('hex');

/**
 * Every round of the site with its key.
 * @param settings what every round rests on beyond the store (the configuration's digest, the
 *   version of the cached models' format)
 * @param today the day of the build (yyyy-mm-dd)
 */
export function roundKeys(site: Site, outline: SiteOutline, settings: string, today: string): RoundKey[] {
  const siteRopes = outline.ropes.filter((rope) => rope.siteId === site.id);
  const rounds = formRounds(site.id, siteRopes, site.program.roundWindowDays);
  const placed = new Set(siteRopes.map((rope) => rope.sampleId));
  const plannedRounds = plannedByRound(site, placed, rounds, outline.plannedWithoutResults);
  const shared = sha256(`ropewatch round inputs\n${settings}\n${JSON.stringify(outline.mistyped)}`);
  const reports = (sampleId: string | null) => (sampleId === null ? null : (outline.reportKeys.get(sampleId) ?? ''));
  return rounds.map((round, index) => {
    const closed = today > resultsDueOn(round.endOn, site.program.resultGraceDays);
    const ropes = round.ropes.map((rope) => [
      rope.sampleId,
      rope.siteId,
      rope.barnId,
      rope.penId,
      rope.hungOn,
      rope.source,
      rope.poolId ?? null,
      reports(rope.sampleId),
      reports(rope.poolId ?? null),
    ]);
    const planned = plannedRounds.get(String(index)) ?? [];
    const sampleIds = new Set<string>();
    for (const rope of round.ropes) {
      sampleIds.add(rope.sampleId);
      if (rope.poolId) sampleIds.add(rope.poolId);
    }
    return {
      id: round.id,
      startOn: round.startOn,
      endOn: round.endOn,
      key: sha256(
        `${shared}\n${round.id} ${round.endOn} ${closed}\n${JSON.stringify(ropes)}\n${JSON.stringify(planned)}`,
      ),
      sampleIds: [...sampleIds],
    };
  });
}
