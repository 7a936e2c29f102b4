/** Writing outputs so that a reader never sees half a file: write beside, then rename. */
import fs from 'node:fs';
import path from 'node:path';
import { processIsAlive } from '../util/processAlive.js';

let counter = 0;

/** `.<name>.<pid>.<n>.tmp` beside the file: the pid tells a stray temp file from a live one. */
function tempNameFor(file: string): string {
  return path.join(path.dirname(file), `.${path.basename(file)}.${process.pid}.${counter++}.tmp`);
}

const TEMP_NAME = /^\..+\.(\d+)\.\d+\.tmp$/;

/** Writes text atomically (temp file in the same folder, then rename). Creates the folder. */
export function writeFileAtomic(file: string, content: string | Buffer): void {
  fs.mkdirSync(path.dirname(file), { recursive: true });
  const temp = tempNameFor(file);
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
    if (entry.isDirectory() && pattern.test(entry.name) && !keep.has(entry.name))
      fs.rmSync(path.join(dir, entry.name), { recursive: true, force: true });
  }
}

/** Where outputs go: straight to their names, or staged (see StagedOutputs). */
export interface OutputWriter {
  write(file: string, content: string | Buffer): void;
}

export const atomicWriter: OutputWriter = { write: writeFileAtomic };

/**
 * A set of outputs that readers see change together: every file is first written under a
 * temporary name beside its target; `publish` then renames them all, so a failure while writing
 * (full disk, a folder in the way) leaves every earlier output as it was.
 */
export class StagedOutputs implements OutputWriter {
  private staged: { temp: string; target: string }[] = [];
  /** Folders made (or found) for the set being staged: a site's build writes dozens of files into each. */
  private readonly folders = new Set<string>();

  write(file: string, content: string | Buffer): void {
    const folder = path.dirname(file);
    if (!this.folders.has(folder)) {
      fs.mkdirSync(folder, { recursive: true });
      this.folders.add(folder);
    }
    const temp = tempNameFor(file);
    this.staged.push({ temp, target: file });
    fs.writeFileSync(temp, content);
  }

  /** Renames every staged file over its target; on a failure the rest are discarded and it throws. */
  publish(): void {
    const staged = this.staged;
    // A folder in a file's place cannot be renamed over (rename(2): EISDIR): find it before any
    // file of the set is swapped in.
    for (const { target } of staged) {
      if (fs.statSync(target, { throwIfNoEntry: false })?.isDirectory()) {
        throw Object.assign(new Error(`EISDIR: a folder is in the way of ${target}`), { code: 'EISDIR' });
      }
    }
    this.staged = [];
    this.folders.clear();
    for (let index = 0; index < staged.length; index++) {
      try {
        fs.renameSync(staged[index]!.temp, staged[index]!.target);
      } catch (error) {
        for (const rest of staged.slice(index)) fs.rmSync(rest.temp, { force: true });
        throw error;
      }
    }
  }

  /** Removes every staged temporary file (after a failure). */
  discard(): void {
    for (const { temp } of this.staged) fs.rmSync(temp, { force: true });
    this.staged = [];
    this.folders.clear();
  }
}

/**
 * Removes temporary output files left by a process that died while writing (their names carry
 * its pid); files of processes still running are left alone. Returns the paths removed.
 */
export function removeStrayTemps(dir: string): string[] {
  const removed: string[] = [];
  const visit = (folder: string): void => {
    let entries: fs.Dirent[];
    try {
      entries = fs.readdirSync(folder, { withFileTypes: true });
    } catch {
      return;
    }
    for (const entry of entries) {
      const full = path.join(folder, entry.name);
      if (entry.isDirectory()) visit(full);
      else {
        const match = TEMP_NAME.exec(entry.name);
        if (match && !processIsAlive(Number(match[1]))) {
          fs.rmSync(full, { force: true });
          removed.push(full);
        }
      }
    }
  };
  visit(dir);
  return removed;
}
