/**
 * Rows as the text format of PostgreSQL's COPY (PostgreSQL 17 documentation, "COPY", section
 * "Text Format"): one line per row, fields separated by a tab, `\N` for NULL. In a field, a
 * backslash, a newline, a carriage return and a tab are written as `\\`, `\n`, `\r` and `\t`
 * (the other characters pass as they are, so `\N` as a four-character text and the empty text
 * stay distinct from NULL). Bytes (bytea) are written in bytea's hex form, `\x` and two hex
 * digits per byte, whose backslash COPY's own escaping doubles.
 */
import type { SqlValue } from './syncProtocol.js';

const NULL_FIELD = '\\N';
const SPECIAL = /[\\\n\r\t]/g;
const ESCAPES: Readonly<Record<string, string>> = { '\\': '\\\\', '\n': '\\n', '\r': '\\r', '\t': '\\t' };

/** One field in COPY's text format. */
export function copyField(value: SqlValue | undefined): string {
  if (value === null || value === undefined) return NULL_FIELD;
  if (typeof value === 'string') return value.replace(SPECIAL, (c) => ESCAPES[c] ?? c);
  if (typeof value === 'boolean') return value ? 't' : 'f';
  if (typeof value === 'number') {
    // String() gives the shortest text that reads back as the same double, and Infinity,
    // -Infinity and NaN as PostgreSQL's float8 input spells them.
    return String(value);
  }
  if (typeof value === 'bigint') return value.toString();
  return `\\\\x${Buffer.from(value.buffer, value.byteOffset, value.byteLength).toString('hex')}`;
}

/** One row in COPY's text format, with its line end. */
export function copyLine(row: readonly (SqlValue | undefined)[]): string {
  return `${row.map(copyField).join('\t')}\n`;
}
