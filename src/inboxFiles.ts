/**
 * The inbox's file-system rules: which names the pipeline derives from an input's name (receipts,
 * archive/ and rejected/ copies, reasons) and how they are kept within the file-name limit, which
 * entries are regular files worth opening, when the inbox cannot take archive/ or rejected/, and
 * how a file taken by another process is told from an unreadable one.
 *
 * The naming functions are pure; `inspectInput`, `isGone`, `takenByAnother`, `inboxProblem` and
 * `moveInto` touch the file system (stat, mkdir, rename), and nothing here opens an input.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { INBOX_FOLDERS } from './workspacePaths.js';

export const ARCHIVE_DIR = INBOX_FOLDERS.archive;
export const REJECTED_DIR = INBOX_FOLDERS.rejected;

/**
 * Longest file name, in bytes, on the file systems ropewatch meets: NAME_MAX of Linux ext4, XFS,
 * Btrfs and tmpfs, and of macOS APFS (in UTF-8 bytes), is 255 (POSIX <limits.h> NAME_MAX; the
 * Linux value from memory). Names are counted in UTF-8 bytes, never in characters.
 */
export const NAME_MAX_BYTES = 255;

/**
 * Bytes `writeFileAtomic` (src/report/files.ts) adds to a name for its temp file: a dot, the name,
 * `.<pid>.<counter>.tmp`. A Linux pid has at most 7 digits (pid_max is at most 2^22, proc(5)) and
 * the counter is below 2^53 (16 digits): 1 + 1 + 7 + 1 + 16 + 4 = 30, rounded up.
 */
export const TEMP_NAME_OVERHEAD_BYTES = 32;

/** Longest name of a file written through a temp file: receipts and reasons. */
export const WRITTEN_NAME_MAX_BYTES = NAME_MAX_BYTES - TEMP_NAME_OVERHEAD_BYTES;

const REASON_SUFFIX = '.reason.txt';

/** Longest extension kept whole when a name is shortened; a longer "extension" is part of the stem. */
const MAX_EXTENSION_BYTES = 16;

/** Bytes of the hash fragment added to a shortened stem: `~` and 8 hex digits. */
const FRAGMENT_BYTES = 9;

export function utf8Bytes(text: string): number {
  return Buffer.byteLength(text, 'utf8');
}

/** The longest prefix of whole code points that takes at most `maxBytes` bytes in UTF-8. */
export function cutToBytes(text: string, maxBytes: number): string {
  let bytes = 0;
  let end = 0;
  for (const codePoint of text) {
    const size = utf8Bytes(codePoint);
    if (bytes + size > maxBytes) break;
    bytes += size;
    end += codePoint.length;
  }
  return text.slice(0, end);
}

/** First 8 hex digits of the SHA-256 of a name: tells apart two names cut to the same prefix. */
function nameFragment(name: string): string {
  return createHash('sha256').update(name, 'utf8').digest('hex').slice(0, 8);
}

/** A name split into its stem and an extension of at most 16 bytes (`.csv`), or '' when it has none. */
export function splitExtension(name: string): { stem: string; ext: string } {
  const ext = path.extname(name);
  if (ext === '' || utf8Bytes(ext) > MAX_EXTENSION_BYTES) return { stem: name, ext: '' };
  return { stem: name.slice(0, name.length - ext.length), ext };
}

/**
 * `stem + tail` when it fits in `maxBytes` UTF-8 bytes; otherwise the stem cut at a code-point
 * boundary, `~`, 8 hex digits of the SHA-256 of the whole stem, then `tail`. The result starts
 * with as much of the stem as fits (recognisable) and two stems cut to the same prefix keep
 * different fragments (unique up to a 32-bit hash collision).
 * @throws RangeError when `tail` leaves no room for a stem of one character and the fragment.
 */
export function fitName(stem: string, tail: string, maxBytes: number): string {
  if (utf8Bytes(stem) + utf8Bytes(tail) <= maxBytes) return stem + tail;
  const room = maxBytes - utf8Bytes(tail) - FRAGMENT_BYTES;
  if (room < 4)
    throw new RangeError(`\`tail\` must leave room for a stem in ${maxBytes} bytes, got ${JSON.stringify(tail)}`);
  return `${cutToBytes(stem, room)}~${nameFragment(stem)}${tail}`;
}

/** The 8-hex stamp that tells apart receipts of different bytes under one name; `unread` when unhashed. */
export function receiptStamp(sha256: string): string {
  return sha256 === '' ? 'unread' : sha256.slice(0, 8);
}

/**
 * Names of a file's receipts in `outbox/receipts/`: `<name>.<stamp>.receipt.json` and `.txt`,
 * both from one shortened base so that they sort side by side.
 */
export function receiptNames(name: string, sha256: string): { json: string; txt: string } {
  const tail = `.${receiptStamp(sha256)}.receipt`;
  // The longer ending decides the cut, so both names share it.
  const base = fitName(name, tail, WRITTEN_NAME_MAX_BYTES - utf8Bytes('.json'));
  return { json: `${base}.json`, txt: `${base}.txt` };
}

/**
 * Name of an input in `archive/` (`rejected: false`) or `rejected/` (`rejected: true`), where a
 * `.reason.txt` is written beside it. `taken` says the plain name is already there: the copy then
 * carries 8 hex digits of its content hash before the extension (`x.3f9a0c12.csv`).
 */
export function destinationName(name: string, sha256: string, options: { rejected: boolean; taken: boolean }): string {
  const maxBytes = options.rejected ? WRITTEN_NAME_MAX_BYTES - utf8Bytes(REASON_SUFFIX) : NAME_MAX_BYTES;
  const { stem, ext } = splitExtension(name);
  return fitName(stem, options.taken ? `.${receiptStamp(sha256)}${ext}` : ext, maxBytes);
}

/** The reason written beside a refused file in `rejected/`. */
export function reasonPath(movedTo: string): string {
  return `${movedTo}${REASON_SUFFIX}`;
}

/** What a directory entry is, in words for a receipt: "a FIFO (named pipe)", "a socket", ... */
export interface EntryStats {
  isFile(): boolean;
  isDirectory(): boolean;
  isFIFO(): boolean;
  isSocket(): boolean;
  isCharacterDevice(): boolean;
  isBlockDevice(): boolean;
  isSymbolicLink(): boolean;
}

export function describeEntry(stats: EntryStats): string {
  if (stats.isFile()) return 'a regular file';
  if (stats.isDirectory()) return 'a folder';
  if (stats.isFIFO()) return 'a FIFO (named pipe)';
  if (stats.isSocket()) return 'a socket';
  if (stats.isCharacterDevice()) return 'a character device';
  if (stats.isBlockDevice()) return 'a block device';
  if (stats.isSymbolicLink()) return 'a symbolic link';
  return 'not a file';
}

export type InputEntry = { kind: 'regular' } | { kind: 'missing' } | { kind: 'special'; what: string };

function errorCode(error: unknown): string | undefined {
  return (error as NodeJS.ErrnoException | null)?.code;
}

/**
 * What is at `file`, without opening it (opening a FIFO for reading blocks until a writer comes).
 * A symbolic link is followed: a link to a regular file is read like the file; a link to anything
 * else, or to nothing, is special.
 */
export function inspectInput(file: string): InputEntry {
  let own: fs.Stats;
  try {
    own = fs.lstatSync(file);
  } catch (error) {
    if (errorCode(error) === 'ENOENT') return { kind: 'missing' };
    throw error;
  }
  if (own.isFile()) return { kind: 'regular' };
  if (!own.isSymbolicLink()) return { kind: 'special', what: describeEntry(own) };
  try {
    const target = fs.statSync(file);
    return target.isFile()
      ? { kind: 'regular' }
      : { kind: 'special', what: `a symbolic link to ${describeEntry(target)}` };
  } catch (error) {
    if (errorCode(error) === 'ENOENT' || errorCode(error) === 'ELOOP')
      return { kind: 'special', what: 'a symbolic link to nothing' };
    throw error;
  }
}

/**
 * The file left its folder between the moment this process was asked to take it and the moment
 * it read or moved it: another `ingest` or watcher took it. Nothing of it was stored by this process.
 */
export class FileTakenError extends Error {
  override readonly name = 'FileTakenError';
  readonly code = 'file-taken';
  constructor(readonly file: string) {
    super(`${path.basename(file)}: already taken by another process (it is no longer at ${file}); nothing done here`);
  }
}

/** True when nothing is at `file` any more (not even a dangling link). */
export function isGone(file: string): boolean {
  return inspectInput(file).kind === 'missing';
}

/** True when `error` is a file-not-found for `file` and the file is indeed gone. */
export function takenByAnother(error: unknown, file: string): boolean {
  return errorCode(error) === 'ENOENT' && isGone(file);
}

/**
 * Why the inbox cannot take the processed files, or null when it can: the inbox or its
 * `archive`/`rejected` entry exists but is not a folder (a folder link is fine). Checked before
 * anything is stored, since the move comes after the commit.
 */
export function inboxProblem(inbox: string): string | null {
  const kindOf = (entry: string): string | null => {
    try {
      const stats = fs.statSync(entry);
      return stats.isDirectory() ? null : describeEntry(stats);
    } catch (error) {
      if (errorCode(error) === 'ENOENT') return null;
      return `unusable (${errorCode(error) ?? String(error)})`;
    }
  };
  const inboxKind = kindOf(inbox);
  if (inboxKind !== null) return `the inbox ${inbox} is ${inboxKind}, not a folder: use --inbox to name a folder`;
  for (const dir of [ARCHIVE_DIR, REJECTED_DIR]) {
    const entry = path.join(inbox, dir);
    const kind = kindOf(entry);
    if (kind !== null) {
      return `${entry} is ${kind}, not a folder: processed files are moved into ${dir}/, so rename or move that file, then run again (nothing was stored)`;
    }
  }
  return null;
}

function exists(file: string): boolean {
  return !isGone(file);
}

/**
 * Moves `file` into `dir` under `destinationName`, never over an earlier file, and returns the
 * new path. A rename; across devices a copy and a delete. A file already in `dir` stays put.
 * @throws the file-system error (ENOENT when another process moved it first, ENOTDIR or EEXIST
 *   when `dir` is not a folder, EACCES).
 */
export function moveInto(dir: string, file: string, sha256: string, rejected: boolean): string {
  const name = path.basename(file);
  if (path.resolve(path.dirname(file)) === path.resolve(dir)) return file;
  let target = path.join(dir, destinationName(name, sha256, { rejected, taken: false }));
  if (exists(target)) target = path.join(dir, destinationName(name, sha256, { rejected, taken: true }));
  fs.mkdirSync(dir, { recursive: true });
  try {
    fs.renameSync(file, target);
  } catch (error) {
    if (errorCode(error) !== 'EXDEV') throw error;
    fs.copyFileSync(file, target, fs.constants.COPYFILE_EXCL);
    fs.rmSync(file);
  }
  return target;
}
