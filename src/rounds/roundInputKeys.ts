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
 * ropes rather than rounds: every key covers all of them. The ropes with their reports' keys are
 * digested apart, so that a round whose ropes the change log shows unchanged is keyed again from
 * its kept digest, without its ropes being read.
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
  /** The digest of the round's ropes with their reports' keys: the part of the key only the ropes change. */
  ropes: string;
  /** The sample IDs whose results the round reads: its ropes' and their pools' (none for a round taken as kept). */
  sampleIds: string[];
}

/** A round of an earlier build that the change log shows unchanged: its span and its ropes' digest. */
export type KeptSpan = Pick<RoundKey, 'id' | 'startOn' | 'endOn' | 'ropes'>;

const sha256 = (text: string): string => createHash('sha256').update(text).digest('hex');

/** What every round's key rests on beyond its own ropes and plans: the settings and the refusals under a mistyped ID. */
export function sharedInputsDigest(settings: string, mistyped: SiteOutline['mistyped']): string {
  return sha256(`ropewatch round inputs\n${settings}\n${JSON.stringify(mistyped)}`);
}

/**
 * The sample IDs that hang as ropes of the site, for plannedByRound: those of `ropes` (an outline
 * from a day holds only the ropes from it) and the planned ropes without results the store finds
 * hung (SiteOutline.plannedPlaced), whatever their day.
 */
export function placedSampleIds(ropes: readonly { sampleId: string }[], plannedPlaced: readonly string[]): Set<string> {
  const placed = new Set(ropes.map((rope) => rope.sampleId));
  for (const sampleId of plannedPlaced) placed.add(sampleId);
  return placed;
}

/**
 * Every round of the site with its key.
 * @param settings what every round rests on beyond the store (the configuration's digest, the
 *   version of the cached models' format)
 * @param today the day of the build (yyyy-mm-dd)
 * @param earlier with an outline of the ropes from `ropesFrom` on: the rounds before, as an
 *   earlier build kept them (their ropes unchanged since, src/rounds/roundHorizon.ts). Their
 *   plans and whether their results are due are judged again: those hang on the rounds formed now
 *   and on `today`.
 */
export function roundKeys(
  site: Site,
  outline: SiteOutline,
  settings: string,
  today: string,
  earlier: readonly KeptSpan[] = [],
): RoundKey[] {
  if ((outline.ropesFrom === undefined) !== (earlier.length === 0))
    throw new Error(`site ${site.id}: an outline from a day goes with the rounds kept before it, and only then`);
  const siteRopes = outline.ropes.filter((rope) => rope.siteId === site.id);
  const formed = formRounds(site.id, siteRopes, site.program.roundWindowDays, earlier.length);
  const placed = placedSampleIds(siteRopes, outline.plannedPlaced);
  const spans = earlier.length === 0 ? formed : [...earlier, ...formed];
  const plannedRounds = plannedByRound(site, placed, spans, outline.plannedWithoutResults);
  const shared = sharedInputsDigest(settings, outline.mistyped);
  const reports = (sampleId: string | null) => (sampleId === null ? null : (outline.reportKeys.get(sampleId) ?? ''));
  const keyOf = (round: KeptSpan, index: number): string => {
    const closed = today > resultsDueOn(round.endOn, site.program.resultGraceDays);
    const planned = plannedRounds.get(String(index)) ?? [];
    return sha256(`${shared}\n${round.id} ${round.endOn} ${closed}\n${round.ropes}\n${JSON.stringify(planned)}`);
  };
  const kept = earlier.map((round, index) => ({ ...round, key: keyOf(round, index), sampleIds: [] }));
  return [
    ...kept,
    ...formed.map((round, offset) => {
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
      const sampleIds = new Set<string>();
      for (const rope of round.ropes) {
        sampleIds.add(rope.sampleId);
        if (rope.poolId) sampleIds.add(rope.poolId);
      }
      const span = { id: round.id, startOn: round.startOn, endOn: round.endOn, ropes: sha256(JSON.stringify(ropes)) };
      return { ...span, key: keyOf(span, earlier.length + offset), sampleIds: [...sampleIds] };
    }),
  ];
}
