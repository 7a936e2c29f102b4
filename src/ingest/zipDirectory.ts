/**
 * The table of contents of a zip archive (an .xlsx workbook is one), read from its central
 * directory, and a check that every part unpacks to no more than the size it declares. Run
 * before a workbook reader unpacks anything: the reader holds each part whole in memory, so a
 * small file that unpacks to gigabytes (a "zip bomb", or sizes that lie) must be stopped here.
 * Offsets and signatures: PKWARE APPNOTE.TXT 6.3.x, sections 4.3.7 (local file header), 4.3.12
 * (central directory header), 4.3.14-4.3.16 (zip64 and classic end of central directory),
 * 4.5.3 (zip64 extended information).
 */
import { inflateRawSync } from 'node:zlib';

export interface ZipEntry {
  name: string;
  /** 0 stored, 8 deflated (APPNOTE 4.4.5). */
  method: number;
  /** General-purpose flags; bit 0 set means the entry is encrypted (APPNOTE 4.4.4). */
  flags: number;
  compressedSize: number;
  uncompressedSize: number;
  localHeaderOffset: number;
  /** Where the entry's central directory header starts. */
  directoryOffset: number;
}

/** Why the bytes cannot be taken as a zip archive whose parts may be unpacked. */
export class ZipProblem extends Error {
  override readonly name = 'ZipProblem';
  constructor(
    readonly kind: 'not-zip' | 'damaged' | 'too-large',
    message: string,
  ) {
    super(message);
  }
}

const EOCD_SIGNATURE = 0x06054b50;
const ZIP64_LOCATOR_SIGNATURE = 0x07064b50;
const ZIP64_EOCD_SIGNATURE = 0x06064b50;
const CENTRAL_SIGNATURE = 0x02014b50;
const LOCAL_SIGNATURE = 0x04034b50;
/** End-of-central-directory record without its comment, and the longest comment (APPNOTE 4.3.16). */
const EOCD_BYTES = 22;
const MAX_COMMENT_BYTES = 0xffff;

/** The end-of-central-directory record's position, searched backwards over the longest comment. */
function findEndRecord(bytes: Buffer): number {
  const lowest = Math.max(0, bytes.length - EOCD_BYTES - MAX_COMMENT_BYTES);
  for (let at = bytes.length - EOCD_BYTES; at >= lowest; at--) {
    if (bytes.readUInt32LE(at) === EOCD_SIGNATURE && at + EOCD_BYTES + bytes.readUInt16LE(at + 20) === bytes.length)
      return at;
  }
  // A comment that does not reach the end exactly (trailing bytes): take the last signature.
  for (let at = bytes.length - EOCD_BYTES; at >= lowest; at--) if (bytes.readUInt32LE(at) === EOCD_SIGNATURE) return at;
  return -1;
}

function safeNumber(value: bigint, what: string): number {
  if (value > BigInt(Number.MAX_SAFE_INTEGER))
    throw new ZipProblem('too-large', `${what} is beyond any file ropewatch reads`);
  return Number(value);
}

/**
 * The archive's entries, from its central directory.
 * @throws ZipProblem `not-zip` when there is no end-of-central-directory record, `damaged` when
 *   the directory runs outside the file or a record lacks its signature, `too-large` when the
 *   archive lists more than `maxEntries` entries.
 */
export function zipEntries(bytes: Buffer, maxEntries: number): ZipEntry[] {
  if (bytes.length < EOCD_BYTES) throw new ZipProblem('not-zip', 'too short to be a zip archive');
  const end = findEndRecord(bytes);
  if (end < 0) throw new ZipProblem('not-zip', 'no zip directory at its end');
  let count = bytes.readUInt16LE(end + 10);
  let directorySize = bytes.readUInt32LE(end + 12);
  let directoryOffset = bytes.readUInt32LE(end + 16);
  if (count === 0xffff || directorySize === 0xffffffff || directoryOffset === 0xffffffff) {
    // Zip64: the locator sits just before the classic record and points at the zip64 record.
    const locator = end - 20;
    if (locator < 0 || bytes.readUInt32LE(locator) !== ZIP64_LOCATOR_SIGNATURE)
      throw new ZipProblem('damaged', 'its zip64 directory locator is missing');
    const record = safeNumber(bytes.readBigUInt64LE(locator + 8), 'the zip64 directory offset');
    if (record + 56 > bytes.length || bytes.readUInt32LE(record) !== ZIP64_EOCD_SIGNATURE)
      throw new ZipProblem('damaged', 'its zip64 directory record is missing');
    count = safeNumber(bytes.readBigUInt64LE(record + 32), 'the number of zip entries');
    directorySize = safeNumber(bytes.readBigUInt64LE(record + 40), 'the zip directory size');
    directoryOffset = safeNumber(bytes.readBigUInt64LE(record + 48), 'the zip directory offset');
  }
  if (count > maxEntries) throw new ZipProblem('too-large', `it holds ${count} parts (at most ${maxEntries} are read)`);
  if (directoryOffset + directorySize > bytes.length)
    throw new ZipProblem('damaged', 'its zip directory runs past the end of the file');
  const entries: ZipEntry[] = [];
  let at = directoryOffset;
  for (let index = 0; index < count; index++) {
    if (at + 46 > bytes.length || bytes.readUInt32LE(at) !== CENTRAL_SIGNATURE)
      throw new ZipProblem('damaged', `zip directory entry ${index + 1} is damaged`);
    const nameLength = bytes.readUInt16LE(at + 28);
    const extraLength = bytes.readUInt16LE(at + 30);
    const commentLength = bytes.readUInt16LE(at + 32);
    if (at + 46 + nameLength + extraLength + commentLength > bytes.length)
      throw new ZipProblem('damaged', `zip directory entry ${index + 1} runs past the end of the file`);
    const entry: ZipEntry = {
      name: bytes.toString('utf8', at + 46, at + 46 + nameLength),
      flags: bytes.readUInt16LE(at + 8),
      method: bytes.readUInt16LE(at + 10),
      compressedSize: bytes.readUInt32LE(at + 20),
      uncompressedSize: bytes.readUInt32LE(at + 24),
      localHeaderOffset: bytes.readUInt32LE(at + 42),
      directoryOffset: at,
    };
    readZip64Extra(bytes.subarray(at + 46 + nameLength, at + 46 + nameLength + extraLength), entry);
    entries.push(entry);
    at += 46 + nameLength + extraLength + commentLength;
  }
  return entries;
}

/** Fills the sizes and offset an entry marks 0xFFFFFFFF from its zip64 extra field (APPNOTE 4.5.3: in this order, only those marked). */
function readZip64Extra(extra: Buffer, entry: ZipEntry): void {
  for (let at = 0; at + 4 <= extra.length; ) {
    const id = extra.readUInt16LE(at);
    const size = extra.readUInt16LE(at + 2);
    if (id === 0x0001) {
      let field = at + 4;
      const next = (what: string): number => {
        if (field + 8 > at + 4 + size || field + 8 > extra.length)
          throw new ZipProblem('damaged', `the zip64 field of ${entry.name} is too short`);
        const value = safeNumber(extra.readBigUInt64LE(field), what);
        field += 8;
        return value;
      };
      if (entry.uncompressedSize === 0xffffffff) entry.uncompressedSize = next('an unpacked size');
      if (entry.compressedSize === 0xffffffff) entry.compressedSize = next('a packed size');
      if (entry.localHeaderOffset === 0xffffffff) entry.localHeaderOffset = next('an entry offset');
      return;
    }
    at += 4 + size;
  }
}

/** Where an entry's packed bytes start: after its local header's name and extra field (their lengths may differ from the directory's). */
export function entryDataOffset(bytes: Buffer, entry: ZipEntry): number {
  const at = entry.localHeaderOffset;
  if (at + 30 > bytes.length || bytes.readUInt32LE(at) !== LOCAL_SIGNATURE)
    throw new ZipProblem('damaged', `the local header of ${entry.name} is missing`);
  const start = at + 30 + bytes.readUInt16LE(at + 26) + bytes.readUInt16LE(at + 28);
  if (start + entry.compressedSize > bytes.length)
    throw new ZipProblem('damaged', `${entry.name} runs past the end of the file`);
  return start;
}

/**
 * Checks that the parts together declare at most `maxUnpackedBytes`, then unpacks each one (one
 * at a time, never more than it declares) to check that it holds exactly what it declares. A
 * reader that trusts these sizes then holds at most `maxUnpackedBytes` of unpacked parts.
 * @throws ZipProblem `too-large` or `damaged` (an encrypted entry, an unknown method, a size that lies).
 */
export function checkUnpackedSizes(bytes: Buffer, entries: readonly ZipEntry[], maxUnpackedBytes: number): void {
  let total = 0;
  for (const entry of entries) total += entry.uncompressedSize;
  if (total > maxUnpackedBytes) {
    throw new ZipProblem(
      'too-large',
      `its parts unpack to ${megabytes(total)} (at most ${megabytes(maxUnpackedBytes)} are read)`,
    );
  }
  for (const entry of entries) {
    if (entry.name.endsWith('/') && entry.uncompressedSize === 0) continue;
    if ((entry.flags & 1) !== 0)
      throw new ZipProblem('damaged', `its part ${entry.name} is encrypted at the zip level`);
    const start = entryDataOffset(bytes, entry);
    const packed = bytes.subarray(start, start + entry.compressedSize);
    let unpacked: number;
    if (entry.method === 0) {
      unpacked = packed.length;
    } else if (entry.method === 8) {
      try {
        // maxOutputLength stops inflation one byte past the declared size (Node zlib options).
        unpacked = inflateRawSync(packed, { maxOutputLength: entry.uncompressedSize + 1 }).length;
      } catch (error) {
        if ((error as NodeJS.ErrnoException).code === 'ERR_BUFFER_TOO_LARGE') unpacked = entry.uncompressedSize + 1;
        else throw new ZipProblem('damaged', `its part ${entry.name} cannot be unpacked (${(error as Error).message})`);
      }
    } else {
      throw new ZipProblem(
        'damaged',
        `its part ${entry.name} is packed with method ${entry.method}, which workbooks do not use`,
      );
    }
    if (unpacked !== entry.uncompressedSize) {
      throw new ZipProblem(
        'damaged',
        `its part ${entry.name} unpacks to ${unpacked > entry.uncompressedSize ? 'more' : 'fewer'} bytes than its declared ${entry.uncompressedSize}`,
      );
    }
  }
}

function megabytes(bytes: number): string {
  return `${Math.ceil(bytes / (1024 * 1024))} MB`;
}
