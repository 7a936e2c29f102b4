/**
 * The golden-file comparison itself: byte for byte, a readable account of the first difference,
 * and files written only under the update flag. Expected texts are written by hand.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { checkGolden, describeDifference, UPDATE_FLAG } from './goldenFiles.js';

const HEADER = 'level,barn,note,detection_confidence';
const GOLDEN = `${HEADER}\nsite,,,0.952381\nbarn,G1,"two, quoted",0.777778\nbarn,G2,,0.785714\n`;

let dirs: string[] = [];
afterEach(() => {
  for (const dir of dirs) fs.rmSync(dir, { recursive: true, force: true });
  dirs = [];
});
function goldenDir(files: Record<string, string> = {}): string {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-golden-'));
  dirs.push(dir);
  for (const [name, text] of Object.entries(files)) fs.writeFileSync(path.join(dir, name), text);
  return dir;
}

describe('describeDifference', () => {
  it('says nothing when the texts are equal', () => {
    expect(describeDifference(GOLDEN, GOLDEN, 'x.csv')).toBeNull();
  });

  it('names the first differing line, shows both versions and the changed cell by its column', () => {
    const changed = GOLDEN.replace('0.777778', '0.777779');
    const text = describeDifference(GOLDEN, changed, 'r01/summary.csv')!;
    expect(text).toContain('r01/summary.csv differs from its golden file at line 3 (golden 5 lines, output 5');
    expect(text).toContain('  - 3  "barn,G1,\\"two, quoted\\",0.777778"');
    expect(text).toContain('  + 3  "barn,G1,\\"two, quoted\\",0.777779"');
    // The quoted comma does not shift the columns: the cell is named by the header.
    expect(text).toContain('changed cells: detection_confidence: "0.777778" -> "0.777779"');
    expect(text).toContain(`${UPDATE_FLAG}=1`);
  });

  it('tells a file that ended early, and a line ending that changed', () => {
    const shorter = describeDifference(GOLDEN, `${HEADER}\nsite,,,0.952381\n`, 'a.csv')!;
    expect(shorter).toContain('at line 3 (golden 5 lines, output 3');
    expect(shorter).toContain('  + 4  (no line: the file ended)');
    const crlf = describeDifference(GOLDEN, GOLDEN.replaceAll('\n', '\r\n'), 'b.csv')!;
    expect(crlf).toContain('at line 1');
    expect(crlf).toContain(`  + 1  "${HEADER}\\r"`);
  });
});

describe('checkGolden', () => {
  it('passes equal bytes, fails a missing or differing golden, and leaves the golden alone', () => {
    const dir = goldenDir({ 'same.csv': GOLDEN });
    expect(checkGolden('same.csv', Buffer.from(GOLDEN), {}, dir)).toBeNull();
    expect(checkGolden('missing.csv', Buffer.from(GOLDEN), {}, dir)).toContain('is missing');
    expect(fs.existsSync(path.join(dir, 'missing.csv'))).toBe(false);
    expect(checkGolden('same.csv', Buffer.from(`${GOLDEN}extra\n`), {}, dir)).toContain('at line 5');
    expect(fs.readFileSync(path.join(dir, 'same.csv'), 'utf8')).toBe(GOLDEN);
  });

  it('tells bytes that differ though they decode to the same text', () => {
    const dir = goldenDir({ 'bytes.csv': GOLDEN });
    // Two invalid UTF-8 bytes both decode to U+FFFD (WHATWG Encoding Standard): same text, other bytes.
    const golden = Buffer.concat([Buffer.from(GOLDEN), Buffer.from([0xff])]);
    fs.writeFileSync(path.join(dir, 'bytes.csv'), golden);
    const problem = checkGolden('bytes.csv', Buffer.concat([Buffer.from(GOLDEN), Buffer.from([0xfe])]), {}, dir);
    expect(problem).toContain('bytes that read as the same text');
  });

  it('writes the golden only when the update flag is 1', () => {
    const dir = goldenDir({ 'old.csv': GOLDEN });
    const fresh = Buffer.from(`${HEADER}\nsite,,,1.000000\n`);
    expect(checkGolden('old.csv', fresh, { [UPDATE_FLAG]: 'yes' }, dir)).toContain('differs');
    expect(checkGolden('old.csv', fresh, { [UPDATE_FLAG]: '1' }, dir)).toBeNull();
    expect(fs.readFileSync(path.join(dir, 'old.csv'))).toEqual(fresh);
  });
});
