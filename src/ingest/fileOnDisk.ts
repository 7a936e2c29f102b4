/**
 * The file on disk as ingest sees it: what identifies one version of it (size, mtime, inode), its
 * content hash, its head (title lines and header) and its first bytes, and whether it changed
 * since reading began. Reads files; stores nothing.
 */
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import { decodeHead, sniffEncoding, type Sniffed } from './decode.js';

const HEAD_BYTES = 64 * 1024;
/** The head never grows past this: a header this long is refused by the record reader anyway. */
const HEAD_LIMIT_BYTES = 16 * 1024 * 1024;

/** What identifies one version of a file on disk: it changes when a writer touches it. */
export interface FileIdentity {
  size: number;
  mtimeMs: number;
  ino: number;
}

export function fileIdentity(file: string): FileIdentity {
  const stats = fs.statSync(file);
  return { size: stats.size, mtimeMs: stats.mtimeMs, ino: stats.ino };
}

/** Why the file on disk is no longer the one that was read, or undefined when it is the same. */
export function changedSince(file: string, before: FileIdentity, name: string): string | undefined {
  let now: FileIdentity;
  try {
    now = fileIdentity(file);
  } catch (error) {
    return `${name} was moved or removed while it was read (${(error as NodeJS.ErrnoException).code ?? String(error)})`;
  }
  if (now.ino !== before.ino) return `${name} was replaced by another file while it was read`;
  if (now.size !== before.size)
    return `${name} changed while it was read (${before.size} bytes when reading began, ${now.size} now)`;
  if (now.mtimeMs !== before.mtimeMs) return `${name} was written to while it was read (its modification time moved)`;
  return undefined;
}

/**
 * The file was still being written while it was read: nothing of it is stored, it stays in the
 * inbox, and the next run (or the watcher, once the file settles) reads it again.
 */
export class FileStillChangingError extends Error {
  override readonly name = 'FileStillChangingError';
  readonly code = 'file-still-changing';
}

/** The message of a FileStillChangingError: why, then what became of the file. */
export function stillChanging(why: string): FileStillChangingError {
  return new FileStillChangingError(`${why}; nothing was stored and the file stays in the inbox for the next run`);
}

/** The file's identity taken before its first byte is read, then its hash and size as read. */
export interface HashedFile {
  before: FileIdentity;
  sha256: string;
  size: number;
}

/** Takes the identity first (any write after it shows in size, mtime or inode), then hashes. */
export async function hashBeforeReading(file: string): Promise<HashedFile> {
  const before = fileIdentity(file);
  const { sha256, size } = await hashFile(file);
  return { before, sha256, size };
}

/** Why the file moved on since it was hashed (grew while hashed, or changed after), or undefined. */
export function movedOnSince(file: string, name: string, hashed: HashedFile): string | undefined {
  return hashed.size !== hashed.before.size
    ? `${name} grew while it was hashed (${hashed.before.size} bytes, then ${hashed.size})`
    : changedSince(file, hashed.before, name);
}

async function hashFile(file: string): Promise<{ sha256: string; size: number }> {
  const hash = createHash('sha256');
  let size = 0;
  for await (const chunk of fs.createReadStream(file)) {
    hash.update(chunk as Buffer);
    size += (chunk as Buffer).length;
  }
  return { sha256: hash.digest('hex'), size };
}

/**
 * The head of the file, enough to hold its title lines and its header whole: 64 KB, grown (up
 * to the longest record the reader accepts) while the header line is not yet complete.
 */
export function readHead(
  file: string,
  size: number,
  linesNeeded: number,
): { head: Buffer; sniffed: Sniffed; text: string } {
  const handle = fs.openSync(file, 'r');
  try {
    for (let window = HEAD_BYTES; ; window *= 4) {
      const buffer = Buffer.alloc(Math.min(window, size, HEAD_LIMIT_BYTES));
      const head = buffer.subarray(0, fs.readSync(handle, buffer, 0, buffer.length, 0));
      const sniffed = sniffEncoding(head, 'auto');
      const text = decodeHead(head, sniffed);
      let lines = 0;
      for (let at = text.indexOf('\n'); at !== -1 && lines < linesNeeded; at = text.indexOf('\n', at + 1)) lines++;
      if (lines >= linesNeeded || head.length >= size || head.length >= HEAD_LIMIT_BYTES)
        return { head, sniffed, text };
    }
  } finally {
    fs.closeSync(handle);
  }
}

/** The first bytes of a file (fewer when it is shorter): enough for a format's signature. */
export function firstBytes(file: string, count: number): Buffer {
  const handle = fs.openSync(file, 'r');
  try {
    const buffer = Buffer.alloc(count);
    return buffer.subarray(0, fs.readSync(handle, buffer, 0, count, 0));
  } finally {
    fs.closeSync(handle);
  }
}
