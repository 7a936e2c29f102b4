/** corrections.yaml (optional): sample IDs a person confirmed as mistyped, each with the ID it meant. */
import fs from 'node:fs';
import type { z } from 'zod';
import { looksLikePlannedId, parseSampleId } from '../plan/sampleId.js';
import { correctionsFileSchema } from './correctionsSchema.js';
import { ConfigError, type ProblemList } from './problems.js';
import { readValid } from './readYaml.js';
import { formatPath } from './schemaProblems.js';
import type { SampleIdCorrection } from './types.js';
import { CONFIG_FILES } from '../workspacePaths.js';

/** Confirmed sample-ID corrections, beside sites.yaml (optional). */
export const CORRECTIONS_FILE = CONFIG_FILES.corrections;

/**
 * Reads config/corrections.yaml when there is one: sample IDs a person confirmed as mistyped.
 * A meant ID with the shape of a planned ID must carry its right check character (ISO/IEC 7064
 * MOD 37-2), or the correction would only swap one refusal for another.
 */
export function loadCorrections(file: string, problems: ProblemList): SampleIdCorrection[] {
  if (!fs.existsSync(file)) return [];
  const raw = readValid(correctionsFileSchema, file, problems, {});
  if (raw === undefined) return [];
  const seen = new Map<string, number>();
  return raw.sampleIds.flatMap((entry, index): SampleIdCorrection[] => {
    const corrected = problems.guard(() => loadCorrection(entry, index, seen, file));
    return corrected === undefined ? [] : [corrected];
  });
}

function loadCorrection(
  entry: z.output<typeof correctionsFileSchema>['sampleIds'][number],
  index: number,
  seen: Map<string, number>,
  file: string,
): SampleIdCorrection {
  const at = (key: string) => formatPath(['sampleIds', index, key]);
  const written = entry.written.replace(/\s+/g, '').toUpperCase();
  let meant = entry.meant.replace(/\s+/g, '').toUpperCase();
  if (written === '') throw new ConfigError(file, at('written'), 'is empty once spaces are removed');
  if (meant === '') throw new ConfigError(file, at('meant'), 'is empty once spaces are removed');
  if (looksLikePlannedId(meant)) {
    const parsed = parseSampleId(meant);
    if (!parsed.ok)
      throw new ConfigError(file, at('meant'), `${parsed.message}; write the planned ID as printed on the rope list`);
    meant = parsed.id;
  }
  if (meant === written)
    throw new ConfigError(file, at('meant'), `is the same ID as written (${written}): nothing to correct`);
  if (entry.line !== undefined && entry.file === undefined)
    throw new ConfigError(file, at('line'), 'a line needs the file it is in: add file');
  const key = `${written}\u001f${entry.file ?? ''}\u001f${entry.line ?? ''}`;
  const earlier = seen.get(key);
  if (earlier !== undefined)
    throw new ConfigError(file, at('written'), `corrects the same ID in the same place as sampleIds[${earlier}]`);
  seen.set(key, index);
  return Object.freeze({ written, meant, file: entry.file, line: entry.line, note: entry.note });
}
