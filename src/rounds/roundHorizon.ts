/**
 * From which day a build reads a site's ropes. Every committed file logs, under the site version
 * it made, the earliest day among the ropes it hung and the ropes whose samples or pools it
 * reported (src/domain/store.ts SiteChange). A round opens on its first rope whatever came before
 * (src/rounds/rounds.ts formRounds), so the ropes from a round's first day on form the same rounds
 * as the whole history; the rounds before the one holding the earliest changed day have the same
 * ropes and reports as when their files were built. Only the ropes from that round's first day on
 * are read, and the rounds before are keyed again from what the last build kept of them
 * (src/rounds/roundInputKeys.ts): one more file costs the same whatever the history. Pure.
 */
import type { OutlineHead, RopeHorizon, SiteChangesSince } from '../domain/store.js';
import { sharedInputsDigest, type KeptSpan } from './roundInputKeys.js';

/** What the last build of a site's outputs kept of its rounds, and from which state. */
export interface BuiltHistory {
  /** The site version of the committed state the build read. */
  siteVersion: number;
  /** The shared inputs digest of its round keys (settings and refusals under a mistyped ID). */
  shared: string;
  /** Its rounds in order. */
  rounds: readonly KeptSpan[];
}

/**
 * The first round of `history` whose ropes may have changed since it was built, or undefined when
 * the log cannot tell (every round is read): a store made before the log, outputs from another
 * state or under other settings, or a change before the second round.
 */
export function firstRoundChanged(
  history: BuiltHistory,
  head: Pick<OutlineHead, 'version' | 'mistyped'>,
  settings: string,
  since: SiteChangesSince,
): number | undefined {
  const { rounds } = history;
  if (rounds.length < 2 || head.version < history.siteVersion) return undefined;
  if (sharedInputsDigest(settings, head.mistyped) !== history.shared) return undefined;
  // Each commit counts the version up by one and logs one row: fewer rows than versions means
  // some were committed before the log (or copied without it).
  if (since.commits !== head.version - history.siteVersion) return undefined;
  // With no day named the ropes are as built; the last round is read again all the same, so that
  // a build always forms one round from the store (its results may be awaited or due).
  const last = rounds.length - 1;
  const fromDay = since.fromDay;
  let first = last;
  if (fromDay !== null) while (first >= 0 && rounds[first]!.startOn > fromDay) first--;
  return first < 1 ? undefined : first;
}

/** The horizon of a build after `history` (none without one): the first day of its first round changed. */
export function ropeHorizon(history: BuiltHistory | undefined, settings: string): RopeHorizon {
  return (head, changesSince) => {
    if (history === undefined) return undefined;
    const first = firstRoundChanged(history, head, settings, changesSince(history.siteVersion));
    return first === undefined ? undefined : history.rounds[first]!.startOn;
  };
}
