/**
 * A site's rounds for a build of its outputs: the rounds whose inputs are those their kept
 * model was formed from are taken as kept (src/report/keptRoundModels.ts); the rest, from the
 * first round whose inputs changed on, are formed from the store, reading the results of their
 * ropes only. One committed state of the store is read (the outline, then the chosen results).
 * With `full`, every round is formed from the store.
 */
import path from 'node:path';
import type { Site } from './config/types.js';
import type { SiteInputs } from './domain/store.js';
import { roundModelText } from './analysis/roundDigests.js';
import { readKeptModels, roundModelFileText, ROUND_MODEL_FILE, type KeptRoundModel } from './report/keptRoundModels.js';
import { roundKeys, type RoundKey } from './rounds/roundInputKeys.js';
import { buildSiteRounds, type SiteRound } from './rounds/roundModel.js';
import type { OutputWriter } from './report/files.js';
import type { Workspace } from './workspace.js';

/** Bumped when the round model's shape changes: models kept under another version are formed again. */

export interface SiteRoundsLoaded {
  /** The site's inputs; results and replaced reports only of the rounds formed here. */
  inputs: SiteInputs;
  rounds: SiteRound[];
  /** Each round's modelDigest. */
  modelDigests: string[];
  /** The index of the first round formed from the store (the rounds before were kept). */
  firstFormed: number;
  /** Writes the kept models of the rounds formed here beside their files. */
  keepFormed(writer: OutputWriter): void;
}

export function loadSiteRounds(
  ws: Workspace,
  site: Site,
  options: { today: string; settings: string; full: boolean },
): SiteRoundsLoaded {
  const siteDir = path.join(ws.outbox, site.id);
  let keys: RoundKey[] = [];
  let kept: KeptRoundModel[] = [];
  const { outline, inputs } = ws.store.siteInputsChosen(site.id, (outline) => {
    keys = roundKeys(site, outline, options.settings, options.today);
    kept = options.full ? [] : readKeptModels(siteDir, keys);
    return kept.length === 0 ? undefined : keys.slice(kept.length).flatMap((round) => round.sampleIds);
  });
  const firstFormed = kept.length;
  const formFrom = keys[firstFormed]?.startOn;
  const formed = buildSiteRounds(
    site,
    formFrom === undefined ? [] : inputs.ropes.filter((rope) => rope.hungOn >= formFrom),
    inputs.results,
    inputs.plannedWithoutResults,
    { replaced: inputs.replaced, mistyped: inputs.mistyped },
    options.today,
    firstFormed === 0
      ? undefined
      : { spans: keys.slice(0, firstFormed), placed: new Set(outline.ropes.map((rope) => rope.sampleId)) },
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
