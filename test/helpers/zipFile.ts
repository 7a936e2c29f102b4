/**
 * Zip archives written byte by byte from PKWARE APPNOTE.TXT 6.3.x (4.3.7 local file header,
 * 4.3.12 central directory header, 4.3.16 end of central directory, 4.5.3 zip64 extra field),
 * so tests can make archives that lie about their sizes or use zip64 fields, which no
 * well-behaved writer produces. CRC-32 as in APPNOTE 4.4.7 (polynomial 0xEDB88320).
 */
import { deflateRawSync } from 'node:zlib';

export interface ZipPart {
  name: string;
  data: Buffer | string;
  /** 0 stored, 8 deflated (default). */
  method?: 0 | 8;
  /** The unpacked size to declare, when it should differ from the truth. */
  declaredSize?: number;
  /** Write the sizes and offset as 0xFFFFFFFF with a zip64 extra field in the central directory. */
  zip64?: boolean;
  /** General-purpose flags (bit 0: encrypted). */
  flags?: number;
}

const CRC_TABLE = Array.from({ length: 256 }, (_, n) => {
  let c = n;
  for (let k = 0; k < 8; k++) c = c & 1 ? 0xedb88320 ^ (c >>> 1) : c >>> 1;
  return c >>> 0;
});

export function crc32(bytes: Buffer): number {
  let crc = 0xffffffff;
  for (const byte of bytes) crc = CRC_TABLE[(crc ^ byte) & 0xff]! ^ (crc >>> 8);
  return (crc ^ 0xffffffff) >>> 0;
}

export function zipFile(parts: readonly ZipPart[]): Buffer {
  const locals: Buffer[] = [];
  const centrals: Buffer[] = [];
  let offset = 0;
  for (const part of parts) {
    const data = Buffer.isBuffer(part.data) ? part.data : Buffer.from(part.data, 'utf8');
    const method = part.method ?? 8;
    const packed = method === 8 ? deflateRawSync(data) : data;
    const name = Buffer.from(part.name, 'utf8');
    const size = part.declaredSize ?? data.length;
    const crc = crc32(data);
    const local = Buffer.alloc(30);
    local.writeUInt32LE(0x04034b50, 0);
    local.writeUInt16LE(20, 4);
    local.writeUInt16LE(part.flags ?? 0, 6);
    local.writeUInt16LE(method, 8);
    local.writeUInt32LE(crc, 14);
    local.writeUInt32LE(packed.length, 18);
    local.writeUInt32LE(size, 22);
    local.writeUInt16LE(name.length, 26);
    locals.push(local, name, packed);

    const extra = part.zip64 ? Buffer.alloc(4 + 24) : Buffer.alloc(0);
    if (part.zip64) {
      extra.writeUInt16LE(0x0001, 0);
      extra.writeUInt16LE(24, 2);
      extra.writeBigUInt64LE(BigInt(size), 4);
      extra.writeBigUInt64LE(BigInt(packed.length), 12);
      extra.writeBigUInt64LE(BigInt(offset), 20);
    }
    const central = Buffer.alloc(46);
    central.writeUInt32LE(0x02014b50, 0);
    central.writeUInt16LE(45, 4);
    central.writeUInt16LE(20, 6);
    central.writeUInt16LE(part.flags ?? 0, 8);
    central.writeUInt16LE(method, 10);
    central.writeUInt32LE(crc, 16);
    central.writeUInt32LE(part.zip64 ? 0xffffffff : packed.length, 20);
    central.writeUInt32LE(part.zip64 ? 0xffffffff : size, 24);
    central.writeUInt16LE(name.length, 28);
    central.writeUInt16LE(extra.length, 30);
    central.writeUInt32LE(part.zip64 ? 0xffffffff : offset, 42);
    centrals.push(central, name, extra);
    offset += local.length + name.length + packed.length;
  }
  const directory = Buffer.concat(centrals);
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(parts.length, 8);
  end.writeUInt16LE(parts.length, 10);
  end.writeUInt32LE(directory.length, 12);
  end.writeUInt32LE(offset, 16);
  return Buffer.concat([...locals, directory, end]);
}
