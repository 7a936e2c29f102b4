/**
 * A site's rounds for a build of its outputs: the rounds whose inputs are those their kept
 * model was formed from are taken as kept (src/report/keptRoundModels.ts); the rest, from the
 * first round whose inputs changed on, are formed from the store, reading the results of their
 * ropes only. One committed state of the store is read (the outline, then the chosen results).
 * After a build that kept its rounds' spans, only the ropes from the first round the change log
 * shows changed are read (src/rounds/roundHorizon.ts). With `full`, every round is formed from
 * the store.
 */
import path from 'node:path';
import type { Site } from './config/types.js';
import type { SiteInputs } from './domain/store.js';
import { roundModelText } from './analysis/roundDigests.js';
import { readKeptModels, roundModelFileText, ROUND_MODEL_FILE, type KeptRoundModel } from './report/keptRoundModels.js';
import { placedSampleIds, roundKeys, sharedInputsDigest, type RoundKey } from './rounds/roundInputKeys.js';
import { ropeHorizon, type BuiltHistory } from './rounds/roundHorizon.js';
import { buildSiteRounds, type SiteRound } from './rounds/roundModel.js';
import type { OutputWriter } from './report/files.js';
import type { Workspace } from './workspace.js';

export interface SiteRoundsLoaded {
  /** The site's inputs; ropes, results and replaced reports only of the rounds formed here. */
  inputs: SiteInputs;
  rounds: SiteRound[];
  /** Each round's key (src/rounds/roundInputKeys.ts). */
  keys: RoundKey[];
  /** The shared inputs digest of the keys. */
  shared: string;
  /** Each round's modelDigest. */
  modelDigests: string[];
  /** The index of the first round formed from the store (the rounds before were kept). */
  firstFormed: number;
  /** Writes the kept models of the rounds formed here beside their files. */
  keepFormed(writer: OutputWriter): void;
}

export interface LoadOptions {
  today: string;
  settings: string;
  /** Form every round from the store, whatever was kept. */
  full: boolean;
  /** What the last build kept: with it, only the ropes the change log shows changed are read. */
  history?: BuiltHistory | undefined;
}

/**
 * The site's rounds: the kept ones taken as kept, the rest formed from the store. When a round the
 * change log shows unchanged has no kept model to take (a damaged outbox), its ropes were not
 * read: the site is loaded again, every rope read.
 */
export function loadSiteRounds(ws: Workspace, site: Site, options: LoadOptions): SiteRoundsLoaded {
  const history = options.full ? undefined : options.history;
  return (history && loadFrom(ws, site, options, history)) ?? loadFrom(ws, site, options, undefined)!;
}

function loadFrom(
  ws: Workspace,
  site: Site,
  options: LoadOptions,
  history: BuiltHistory | undefined,
): SiteRoundsLoaded | undefined {
  const siteDir = path.join(ws.outbox, site.id);
  let keys: RoundKey[] = [];
  let kept: KeptRoundModel[] = [];
  let unkept = false;
  const { outline, inputs } = ws.store.siteInputsChosen(
    site.id,
    (outline) => {
      const from = outline.ropesFrom;
      const earlier = from === undefined ? [] : history!.rounds.filter((round) => round.startOn < from);
      keys = roundKeys(site, outline, options.settings, options.today, earlier);
      kept = options.full ? [] : readKeptModels(siteDir, keys);
      unkept = kept.length < earlier.length;
      if (unkept) return [];
      return kept.length === 0 ? undefined : keys.slice(kept.length).flatMap((round) => round.sampleIds);
    },
    history && ropeHorizon(history, options.settings),
  );
  if (unkept) return undefined;
  const firstFormed = kept.length;
  const formFrom = keys[firstFormed]?.startOn;
  const placed = placedSampleIds(outline.ropes, outline.plannedPlaced);
  const formed = buildSiteRounds(
    site,
    formFrom === undefined ? [] : inputs.ropes.filter((rope) => rope.hungOn >= formFrom),
    inputs.results,
    inputs.plannedWithoutResults,
    { replaced: inputs.replaced, mistyped: inputs.mistyped },
    options.today,
    firstFormed === 0 ? undefined : { spans: keys.slice(0, firstFormed), placed },
  );
  const formedIds = formed.map((round) => round.id).join(' ');
  const expectedIds = keys
    .slice(firstFormed)
    .map((round) => round.id)
    .join(' ');
  if (formedIds !== expectedIds)
    throw new Error(`site ${site.id}: rounds formed (${formedIds}) differ from the rounds outlined (${expectedIds})`);
  // The text is taken before anything reads the rounds: it is what a whole build keeps and digests.
  const texts = formed.map(roundModelText);
  return {
    inputs,
    rounds: [...kept.map((round) => round.model), ...formed],
    keys,
    shared: sharedInputsDigest(options.settings, outline.mistyped),
    modelDigests: [...kept.map((round) => round.digest), ...texts.map((text) => text.digest)],
    firstFormed,
    keepFormed(writer) {
      texts.forEach((text, offset) => {
        const round = keys[firstFormed + offset]!;
        writer.write(path.join(siteDir, round.id, ROUND_MODEL_FILE), roundModelFileText(round.key, text));
      });
    },
  };
}
