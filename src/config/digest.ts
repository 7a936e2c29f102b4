/**
 * A digest of the configuration files as they were loaded: outputs record it, so that a change
 * of cutoffs, layouts or programme settings makes them out of date just as new data does.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { CONFIG_FILES } from '../workspacePaths.js';

/** The files loadConfig reads, in a fixed order (names relative to the configuration folder). */
function configFiles(dir: string): string[] {
  const labsDir = path.join(dir, CONFIG_FILES.labsDir);
  const labs = fs.existsSync(labsDir)
    ? fs
        .readdirSync(labsDir)
        .filter((name) => /\.ya?ml$/i.test(name))
        .sort()
        .map((name) => path.join(CONFIG_FILES.labsDir, name))
    : [];
  return [CONFIG_FILES.sites, CONFIG_FILES.assays, ...labs];
}

/** sha256 over each file's name and bytes; a file that cannot be read counts as empty. */
export function configDigest(dir: string): string {
  const hash = createHash('sha256');
  for (const name of configFiles(dir)) {
    let bytes: Buffer;
    try {
      bytes = fs.readFileSync(path.join(dir, name));
    } catch {
      bytes = Buffer.alloc(0);
    }
    hash.update(`${name}\u0000${bytes.length}\u0000`);
    hash.update(bytes);
  }
  return hash.digest('hex');
}
