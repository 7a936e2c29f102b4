/**
 * Each round's model kept beside its files (`outbox/<site>/<round>/.round-model.json`), under the
 * key of the inputs it was formed from (src/rounds/roundInputKeys.ts). A build takes the models of
 * the rounds before the first whose key changed from here, and forms only the rest from the
 * store: reading and forming a long history is most of what a drop would cost otherwise.
 *
 * The file holds a header line (the key, the model's digest: src/analysis/roundDigests.ts
 * modelDigest) and the model's JSON text as it was made (JSON.stringify of the model): the text a
 * build of the whole history makes for the round, so its digest is too.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { RoundKey } from '../rounds/roundInputKeys.js';
import type { SiteRound } from '../rounds/roundModel.js';

export const ROUND_MODEL_FILE = '.round-model.json';

/** The header's tag: a model kept under another tag is formed again. */
const MODEL_SCHEMA = 'ropewatch.round-model/v1';

export interface KeptRoundModel {
  key: string;
  /** modelDigest of the model's JSON text. */
  digest: string;
  model: SiteRound;
}

/** The file's content for a round formed under `key` (`digest`: modelDigest(text)). */
export function roundModelFileText(key: string, text: string, digest: string): string {
  return `${JSON.stringify({ schema: MODEL_SCHEMA, key, digest })}\n${text}\n`;
}

function readKept(file: string): KeptRoundModel | undefined {
  let content: string;
  try {
    content = fs.readFileSync(file, 'utf8');
  } catch {
    return undefined;
  }
  const newline = content.indexOf('\n');
  if (newline < 0 || !content.endsWith('\n')) return undefined;
  try {
    const header = JSON.parse(content.slice(0, newline)) as { schema?: unknown; key?: unknown; digest?: unknown };
    if (header.schema !== MODEL_SCHEMA || typeof header.key !== 'string' || typeof header.digest !== 'string')
      return undefined;
    return {
      key: header.key,
      digest: header.digest,
      model: JSON.parse(content.slice(newline + 1, -1)) as SiteRound,
    };
  } catch {
    return undefined;
  }
}

/**
 * The kept models of the site's first rounds, as far as each was kept under the round's key: the
 * rounds from the first whose model is missing, damaged or of other inputs on are formed again.
 */
export function readKeptModels(siteDir: string, keys: readonly RoundKey[]): KeptRoundModel[] {
  const kept: KeptRoundModel[] = [];
  for (const round of keys) {
    const model = readKept(path.join(siteDir, round.id, ROUND_MODEL_FILE));
    if (model === undefined || model.key !== round.key) break;
    kept.push(model);
  }
  return kept;
}
