/**
 * Which names in the drop folder are lab exports worth reading, and which are artefacts of
 * copying, downloading or editing. Decided on the name alone, so chokidar can skip a path
 * before it stats it, and the start-up sweep applies the very same rule.
 */
import path from 'node:path';
import { INBOX_FOLDERS } from '../workspacePaths.js';

/**
 * Extensions accepted by default: the text exports labs send (comma, tab, or "text"), Excel
 * workbooks (.xlsx, and .xlsm, the same format with macros, which are never run), and the
 * spreadsheet formats ropewatch does not read (.xls, .xlsb, .ods): those are taken too, so that
 * they are refused with the reason (save as .xlsx or CSV) rather than left in the inbox unseen.
 */
export const DEFAULT_EXTENSIONS: readonly string[] = Object.freeze([
  '.csv',
  '.tsv',
  '.txt',
  '.xlsx',
  '.xlsm',
  '.xls',
  '.xlsb',
  '.ods',
]);

/**
 * Subfolders of the inbox that hold files already handled by the pipeline. A file there is
 * never new input, even if a user moves the watcher's depth or sweeps by hand.
 */
export const HANDLED_SUBFOLDERS: readonly string[] = Object.freeze([INBOX_FOLDERS.archive, INBOX_FOLDERS.rejected]);

/** Endings written by copy tools and browsers while a transfer is in flight (common practice, no source). */
const IN_FLIGHT_SUFFIXES = ['.part', '.partial', '.tmp', '.crdownload', '.download', '.swp', '.swx'];

export interface IgnoreOptions {
  /** Accepted extensions, with the leading dot, matched case-insensitively. Default {@link DEFAULT_EXTENSIONS}. */
  extensions?: readonly string[];
  /**
   * The inbox folder. When given, `archive/` and `rejected/` are looked for in the path relative to
   * it (so an inbox that itself lives under a folder called "archive" still works) and any path
   * outside the inbox is ignored. When absent, every folder in the path as given is examined.
   */
  inbox?: string;
}

/**
 * Normalises an extension list: lower case, leading dot, no duplicates.
 * @throws RangeError when the list is empty or an entry is not of the form ".ext".
 */
export function normaliseExtensions(extensions: readonly string[]): readonly string[] {
  if (extensions.length === 0) {
    throw new RangeError('`extensions` must be a non-empty list of ".ext" strings, got []');
  }
  const out = new Set<string>();
  for (const raw of extensions) {
    const ext = String(raw).trim().toLowerCase();
    if (!/^\.[^./\\]+$/.test(ext)) {
      throw new RangeError(`\`extensions\` entries must look like ".csv", got ${JSON.stringify(raw)}`);
    }
    out.add(ext);
  }
  return Object.freeze([...out]);
}

/**
 * Why a path in the drop folder is not a lab export to read, or null when it should be read.
 *
 * Rules, first match wins: outside the inbox; inside `archive/` or `rejected/`; a dotfile
 * (hidden files, editor and sync-client state); an Office owner/lock file `~$name`; an editor
 * backup ending in `~`; an in-flight transfer (`.part`, `.tmp`, `.crdownload`, `.swp`, ...);
 * and finally any extension not in the accepted list. The rules are trade conventions of
 * operating systems, browsers and office suites (common practice, no source).
 *
 * @param filePath absolute or relative path; both `/` and `\` separate folders (network shares).
 * @throws RangeError when `options.extensions` is malformed (see {@link normaliseExtensions}).
 */
export function ignoreReason(filePath: string, options: IgnoreOptions = {}): string | null {
  const extensions = options.extensions === undefined ? DEFAULT_EXTENSIONS : normaliseExtensions(options.extensions);
  let rel = filePath;
  if (options.inbox !== undefined) {
    rel = path.relative(path.resolve(options.inbox), path.resolve(filePath));
    if (rel === '') return 'the inbox itself, not a file in it';
    if (rel.startsWith('..') || path.isAbsolute(rel)) return 'outside the inbox';
  }
  const parts = rel.split(/[\\/]+/).filter((part) => part !== '');
  const name = parts.pop() ?? '';
  if (name === '') return 'no file name';
  for (const folder of parts) {
    if (HANDLED_SUBFOLDERS.includes(folder.toLowerCase())) return `inside ${folder}/`;
  }
  const lower = name.toLowerCase();
  if (name.startsWith('.')) return 'hidden file';
  if (name.startsWith('~$')) return 'office lock file';
  if (name.endsWith('~')) return 'editor backup';
  for (const suffix of IN_FLIGHT_SUFFIXES) {
    if (lower.endsWith(suffix)) return `transfer in progress (${suffix})`;
  }
  if (!extensions.some((ext) => lower.endsWith(ext) && lower.length > ext.length)) {
    return `not an accepted extension (${extensions.join(', ')})`;
  }
  return null;
}

/** The subset of `fs.Stats` the chokidar matcher looks at. */
export interface EntryKind {
  isFile(): boolean;
  isDirectory(): boolean;
}

/**
 * Builds the `ignored(path, stats?)` matcher handed to chokidar. chokidar calls it once without
 * stats and again with them (chokidar 5 README, "Path filtering"); it also asks about the watched
 * folder itself, which must never be ignored or nothing is watched. Subfolders are ignored
 * outright: processed files live in `archive/` and `rejected/`, and with `depth: 0` nothing below
 * the inbox is input. Other non-regular entries are judged by name only; the watcher skips them.
 * @throws RangeError when `extensions` is malformed (checked once, here, not per event).
 */
export function inboxMatcher(
  inbox: string,
  extensions: readonly string[] = DEFAULT_EXTENSIONS,
): (candidate: string, stats?: EntryKind) => boolean {
  const root = path.resolve(inbox);
  const accepted = normaliseExtensions(extensions);
  return (candidate, stats) => {
    if (path.resolve(candidate) === root) return false;
    if (stats?.isDirectory()) return true;
    // A FIFO, socket or device with an accepted name passes: the watcher logs it as skipped
    // (from its stat, never opening it) rather than leaving the operator to wonder.
    return ignoreReason(candidate, { inbox: root, extensions: accepted }) !== null;
  };
}
