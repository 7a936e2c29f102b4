/**
 * Each round's model kept beside its files (`outbox/<site>/<round>/.round-model.json`), under the
 * key of the inputs it was formed from (src/rounds/roundInputKeys.ts). A build takes the models of
 * the rounds before the first whose key changed from here, and forms only the rest from the
 * store: reading and forming a long history is most of what a drop would cost otherwise.
 *
 * The file holds a header line (the key, the model's digest), the round with its barns' pens as
 * their ids, and a line per barn with its pens (src/analysis/roundDigests.ts `roundModelText`). A barn's pens
 * are parsed when something first reads them: most of a model's bytes are its pens, and only the
 * latest rounds' pens are read (the pens' history, the maps); the confidence and the freedom read
 * the barns' tallies only.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { RoundModelText } from '../analysis/roundDigests.js';
import type { RoundKey } from '../rounds/roundInputKeys.js';
import type { BarnRound, SiteRound } from '../rounds/roundModel.js';
import { registerPenIds } from '../rounds/penIds.js';

export const ROUND_MODEL_FILE = '.round-model.json';

/** The header's tag; raise it with any change to the round model's shape: a model kept under another tag is formed again. */
const MODEL_SCHEMA = 'ropewatch.round-model/v2';

export interface KeptRoundModel {
  key: string;
  /** RoundModelText.digest. */
  digest: string;
  model: SiteRound;
}

/** The file's content for a round formed under `key`. */
export function roundModelFileText(key: string, text: RoundModelText): string {
  return `${JSON.stringify({ schema: MODEL_SCHEMA, key, digest: text.digest, barns: text.pens.length })}\n${text.outline}\n${text.pens.map((pens) => `${pens}\n`).join('')}`;
}

/**
 * Makes `barn.pens` (read from the file as the pens' ids) parse `text` when first read: a plain
 * property from then on, in the same place. The ids stay known (src/rounds/penIds.ts).
 */
function pensWhenRead(barn: BarnRound, text: string): void {
  registerPenIds(barn, barn.pens as unknown as string[]);
  const settle = (value: BarnRound['pens']) =>
    Object.defineProperty(barn, 'pens', { value, writable: true, enumerable: true, configurable: true });
  Object.defineProperty(barn, 'pens', {
    get() {
      const value = JSON.parse(text) as BarnRound['pens'];
      settle(value);
      return value;
    },
    set: settle,
    enumerable: true,
    configurable: true,
  });
}

function readKept(file: string): KeptRoundModel | undefined {
  let content: string;
  try {
    content = fs.readFileSync(file, 'utf8');
  } catch {
    return undefined;
  }
  if (!content.endsWith('\n')) return undefined;
  const lines = content.slice(0, -1).split('\n');
  try {
    const header = JSON.parse(lines[0]!) as { schema?: unknown; key?: unknown; digest?: unknown; barns?: unknown };
    if (
      header.schema !== MODEL_SCHEMA ||
      typeof header.key !== 'string' ||
      typeof header.digest !== 'string' ||
      lines.length !== 2 + Number(header.barns)
    )
      return undefined;
    const model = JSON.parse(lines[1]!) as SiteRound;
    if (model.barns.length !== header.barns) return undefined;
    model.barns.forEach((barn, index) => pensWhenRead(barn, lines[2 + index]!));
    return { key: header.key, digest: header.digest, model };
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
