/**
 * What each round's outputs rest on, as a digest: a build compares it with the digest the
 * round's files were written from and rewrites only the rounds whose digest changed.
 *
 * A round's findings read its own rounds model and confidence and those of the rounds before it
 * (the probability of freedom carries forward, a pen's history and the pens positive earlier look
 * back), never a later round. So the digests form a chain: round i's digest covers the settings,
 * its own model and confidence and the digest of round i - 1, and a change in one round changes
 * its digest and that of every round after it, and no other. The latest round also shows what
 * the next round's plan says of it (an overdue round) and so covers the plan and the day.
 */
import { createHash } from 'node:crypto';
import type { SiteRound } from '../rounds/roundModel.js';
import type { SiteFindings } from './analyseSite.js';

export const sha256 = (text: string): string => createHash('sha256').update(text).digest('hex');

/**
 * A round's model as JSON text in parts: the round with each barn's pens as their ids only, and
 * each barn's pens; with the digest of the parts, which the round digests read. A kept model is
 * read in the same parts, its pens only when something reads them (src/report/keptRoundModels.ts).
 */
export interface RoundModelText {
  outline: string;
  pens: string[];
  digest: string;
}

export function roundModelText(round: SiteRound): RoundModelText {
  const outline = JSON.stringify({
    ...round,
    barns: round.barns.map((barn) => ({ ...barn, pens: barn.pens.map((pen) => pen.penId) })),
  });
  const pens = round.barns.map((barn) => JSON.stringify(barn.pens));
  return { outline, pens, digest: sha256(`${outline}\n${pens.join('\n')}`) };
}

/**
 * One digest per round, in round order.
 * @param settings what every round's outputs depend on beyond the store: the configuration's
 *   digest and the version of the files' format
 * @param today the day of the build (yyyy-mm-dd)
 * @param modelDigests each round's model digest (`roundModelText`; a round kept from an earlier
 *   build has it already); by default made here
 */
export function roundDigests(
  findings: Pick<SiteFindings, 'rounds' | 'confidence' | 'plan'>,
  settings: string,
  today: string,
  modelDigests: readonly string[] = findings.rounds.map((round) => roundModelText(round).digest),
): string[] {
  const last = findings.rounds.length - 1;
  let chain = sha256(`ropewatch round digest\n${settings}`);
  return findings.rounds.map((_, index) => {
    chain = sha256(`${chain}\n${modelDigests[index]}\n${JSON.stringify(findings.confidence[index])}`);
    return index === last ? sha256(`${chain}\nlatest ${today}\n${JSON.stringify(findings.plan)}`) : chain;
  });
}
