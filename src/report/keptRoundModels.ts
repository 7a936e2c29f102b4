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
 * Makes `barn.pens` (read from the file as the pens' ids) parse the text `read` gives when first
 * read: a plain property from then on, in the same place. The ids stay known (src/rounds/penIds.ts).
 */
function pensWhenRead(barn: BarnRound, read: () => string): void {
  registerPenIds(barn, barn.pens as unknown as string[]);
  const settle = (value: BarnRound['pens']) =>
    Object.defineProperty(barn, 'pens', { value, writable: true, enumerable: true, configurable: true });
  Object.defineProperty(barn, 'pens', {
    get() {
      const value = JSON.parse(read()) as BarnRound['pens'];
      settle(value);
      return value;
    },
    set: settle,
    enumerable: true,
    configurable: true,
  });
}

const NEWLINE = 0x0a;

/**
 * The kept model in `file`, or undefined when it is missing, cut off or not one. The file is read
 * as bytes and only its header and outline are decoded: a build reads every kept round's file,
 * and most of a file's bytes are its pens (tens of KB a round), of which only the latest rounds'
 * are ever parsed. A barn's pens stay bytes until then (outside V8's heap, which a long history
 * of decoded text would otherwise fill and collect on every drop). A newline byte is never part
 * of a longer UTF-8 sequence (RFC 3629), so the lines are found in the bytes.
 */
function readKept(file: string): KeptRoundModel | undefined {
  let bytes: Buffer;
  try {
    bytes = fs.readFileSync(file);
  } catch {
    return undefined;
  }
  if (bytes.length === 0 || bytes[bytes.length - 1] !== NEWLINE) return undefined;
  const lineEnds: number[] = [];
  for (let at = bytes.indexOf(NEWLINE); at !== -1; at = bytes.indexOf(NEWLINE, at + 1)) lineEnds.push(at);
  const line = (index: number) => bytes.toString('utf8', index === 0 ? 0 : lineEnds[index - 1]! + 1, lineEnds[index]);
  try {
    const header = JSON.parse(line(0)) as { schema?: unknown; key?: unknown; digest?: unknown; barns?: unknown };
    if (
      header.schema !== MODEL_SCHEMA ||
      typeof header.key !== 'string' ||
      typeof header.digest !== 'string' ||
      lineEnds.length !== 2 + Number(header.barns)
    )
      return undefined;
    const model = JSON.parse(line(1)) as SiteRound;
    if (model.barns.length !== header.barns) return undefined;
    model.barns.forEach((barn, index) => pensWhenRead(barn, () => line(2 + index)));
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
