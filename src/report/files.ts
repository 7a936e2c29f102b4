/** Writing outputs so that a reader never sees half a file: write beside, then rename. */
import fs from 'node:fs';
import path from 'node:path';

let counter = 0;

/** Writes text atomically (temp file in the same folder, then rename). Creates the folder. */
export function writeFileAtomic(file: string, content: string | Buffer): void {
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const temp = path.join(path.dirname(file), `.${path.basename(file)}.${process.pid}.${counter++}.tmp`);
  try {
    fs.writeFileSync(temp, content);
    fs.renameSync(temp, file);
  } catch (error) {
    fs.rmSync(temp, { force: true });
    throw error;
  }
}

export function writeJson(file: string, value: unknown): void {
  writeFileAtomic(file, JSON.stringify(value, null, 2) + '\n');
}

/** Removes sub-folders whose names match `pattern` and are not in `keep`. */
export function removeStaleFolders(dir: string, pattern: RegExp, keep: ReadonlySet<string>): void {
  if (!fs.existsSync(dir)) return;
  for (const entry of fs.readdirSync(dir, { withFileTypes: true })) {
    if (entry.isDirectory() && pattern.test(entry.name) && !keep.has(entry.name)) fs.rmSync(path.join(dir, entry.name), { recursive: true, force: true });
  }
}
