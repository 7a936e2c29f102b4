/**
 * Property-based tests (fast-check, fixed seeds, bounded runs) of the ingest boundary: whatever
 * bytes arrive, ropewatch answers with a coded receipt or a coded row refusal (the codes of
 * src/ingest/errors.ts), never stores a Ct outside (0, cycle limit), and never loses a valid row.
 *
 * Oracles, all outside the code under test: JavaScript's own Number() for what a plain decimal
 * means; Node's TextEncoder / Buffer for what UTF-8 and UTF-16LE bytes encode; the row list the
 * generator wrote (which rows are valid, on which line each starts: RFC 4180 records, where a
 * quoted field may hold line breaks) for what the store must hold. Lab behaviour (tokens,
 * decimal mark, cycle limit) comes from the demo lab profiles in src/demo/config/labs/.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import type { CtLabAssay, LabProfile } from '../../src/config/types.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { BinaryContentError, EncodingError, sniffEncoding, TextChunkDecoder } from '../../src/ingest/decode.js';
import { detectFileKind } from '../../src/ingest/detect.js';
import { IngestError, REJECTION_CODES } from '../../src/ingest/errors.js';
import { ingestFile, type Receipt } from '../../src/ingest/ingestFile.js';
import { plannedIdChecker } from '../../src/ingest/plannedIds.js';
import { mapResultRow, type ResultContext } from '../../src/ingest/resultRecords.js';
import { normaliseSampleId } from '../../src/ingest/recordCells.js';
import { readCt } from '../../src/interpret/ct.js';
import { Store } from '../../src/store/store.js';
import { NORTHFIELD_ASSAYS, NORTHFIELD_HEADER } from '../helpers/hardening.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const check = plannedIdChecker(config);
const northfield = config.labById.get('northfield')!;
const ostermark = config.labById.get('ostermark')!;
const CODES = new Set(Object.keys(REJECTION_CODES));
const SEED = 20261201;
/** One code point anywhere in Unicode (lone surrogates included), for hostile text. */
const anyChar = fc.string({ unit: 'binary', minLength: 1, maxLength: 1 });

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-prop-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

/** Strings a lab might write in a Ct cell, hostile ones included. */
const ctText = fc.oneof(
  fc.string({ maxLength: 12 }),
  fc.string({ unit: 'binary', maxLength: 6 }),
  fc.string({ unit: fc.constantFrom(...'0123456789.,-+eE> xXN'.split('')), maxLength: 8 }),
  fc.double({ noNaN: false }).map(String),
  fc.double({ min: 0, max: 70, noNaN: true }).map((value) => value.toFixed(2)),
  fc.constantFrom(
    '1e3',
    '-5',
    'NaN',
    '35,2',
    '>40',
    '> 45',
    '>30',
    '0',
    '0.0',
    '40',
    '45',
    '60',
    '60.01',
    'Infinity',
    '0x1F',
    'Undetermined',
    'n/a',
    '',
  ),
);

/** The lab's PCR assays: readCt reads Ct cells (an S/P assay's cells go to readSp). */
function assaysOf(lab: LabProfile): CtLabAssay[] {
  return [...lab.assays.values()].filter((assay): assay is CtLabAssay => assay.measure === 'ct');
}

describe('readCt on arbitrary cell text', () => {
  it('never throws and never reads a Ct outside (0, cycle limit), for both decimal conventions', () => {
    fc.assert(
      fc.property(ctText, fc.constantFrom(northfield, ostermark), fc.nat(), (text, lab, pick) => {
        const assays = assaysOf(lab);
        const labAssay = assays[pick % assays.length]!;
        const reading = readCt(text, lab, labAssay);
        expect(['detected', 'not-detected', 'missing', 'error']).toContain(reading.kind);
        if (reading.kind === 'detected') {
          expect(Number.isFinite(reading.ct)).toBe(true);
          expect(reading.ct).toBeGreaterThan(0);
          expect(reading.ct).toBeLessThan(labAssay.cycleLimit);
        }
        if (reading.kind === 'error') expect(CODES.has(reading.code)).toBe(true);
      }),
      { seed: SEED, numRuns: 2000 },
    );
  });

  it('reads a plain decimal below the cycle limit as the number JavaScript parses from it', () => {
    // Oracle: Number() on the text with the lab's decimal mark turned into a dot.
    fc.assert(
      fc.property(
        fc.double({ min: 0.01, max: 39.99, noNaN: true }),
        fc.integer({ min: 0, max: 3 }),
        fc.constantFrom(northfield, ostermark),
        (value, digits, lab) => {
          const text = value.toFixed(digits);
          const expected = Number(text);
          fc.pre(expected > 0 && expected < 40);
          const written = lab.decimal === ',' ? text.replace('.', ',') : text;
          const reading = readCt(written, lab, assaysOf(lab)[0]!);
          expect(reading).toEqual({ kind: 'detected', ct: expected });
        },
      ),
      { seed: SEED, numRuns: 500 },
    );
  });

  it('refuses exponents, signs, NaN and the wrong decimal mark instead of guessing', () => {
    // Each case by the profile (src/demo/config/labs/northfield.yaml: decimal ".", cycle limit 40).
    const prrsv = northfield.assays.get('prrsv na/eu rt-pcr')!;
    for (const text of ['1e3', '-5', 'NaN', '35,2', 'Infinity', '0x1F', '>30'])
      expect(readCt(text, northfield, prrsv)).toMatchObject({ kind: 'error', code: 'bad-ct' });
    expect(readCt('0', northfield, prrsv)).toMatchObject({ kind: 'error', code: 'ct-out-of-range' });
    expect(readCt('61', northfield, prrsv)).toMatchObject({ kind: 'error', code: 'ct-out-of-range' });
    expect(readCt('>40', northfield, prrsv).kind).toBe('not-detected');
    // Ostermark writes decimal commas and declares 0 as its not-detected code.
    const ostPrrsv = ostermark.assays.get('prrsv rt-qpcr')!;
    expect(readCt('35,2', ostermark, ostPrrsv)).toEqual({ kind: 'detected', ct: 35.2 });
    expect(readCt('0', ostermark, ostPrrsv).kind).toBe('not-detected');
  });
});

const nfKind = detectFileKind('nvdl_p.csv', NORTHFIELD_HEADER.join(',') + '\n', config.labs);
if (nfKind.kind !== 'results') throw new Error('the Northfield header is not recognised');
const nfContext: ResultContext = {
  fileName: 'nvdl_p.csv',
  lab: nfKind.lab,
  columnIndex: nfKind.columnIndex,
  assayById: config.assayById,
  sites: config.sites,
  plannedIdCheck: check,
};

describe('mapResultRow on arbitrary records', () => {
  it('returns a row or a coded refusal on the given line, never throws, never a Ct outside (0, limit)', () => {
    const cell = fc.oneof(
      fc.string({ maxLength: 20 }),
      ctText,
      fc.constantFrom(...Object.values(NORTHFIELD_ASSAYS), '2026-08-03', 'HCF01-005X', 'TR-N1-07-20260805', 'TR-N1-07'),
    );
    fc.assert(
      fc.property(fc.array(cell, { maxLength: 12 }), fc.integer({ min: 2, max: 1_000_000 }), (cells, line) => {
        const outcome = mapResultRow(cells, line, nfContext);
        if (outcome.ok) {
          expect(outcome.row.line).toBe(line);
          if (outcome.row.ct !== null) {
            expect(outcome.row.ct).toBeGreaterThan(0);
            expect(outcome.row.ct).toBeLessThan(outcome.row.cycleLimit!);
          }
        } else {
          expect(CODES.has(outcome.rejection.code)).toBe(true);
          expect(outcome.rejection.line).toBe(line);
          expect((outcome.rejection.value ?? '').length).toBeLessThanOrEqual(200);
        }
      }),
      { seed: SEED, numRuns: 1500 },
    );
  });
});

describe('detectFileKind on arbitrary heads', () => {
  it('returns a kind or throws a coded IngestError, nothing else', () => {
    const headerish = fc.oneof(
      fc.string({ maxLength: 200 }),
      fc
        .array(
          fc.oneof(
            fc.constantFrom(...NORTHFIELD_HEADER, 'sample_id', 'site', 'barn', 'pen', 'hung_on', 'Probe', 'Ct', ''),
            fc.string({ maxLength: 8 }),
          ),
          { maxLength: 12 },
        )
        .chain((cells) => fc.constantFrom(',', ';', '\t', '|').map((delimiter) => cells.join(delimiter))),
    );
    fc.assert(
      fc.property(
        headerish,
        fc.string({ maxLength: 60 }),
        fc.constantFrom('nvdl_x.csv', 'oahl_x.csv', 'ropes.csv', 'x.txt'),
        fc.boolean(),
        (first, rest, name, bom) => {
          const head = `${bom ? '\uFEFF' : ''}${first}\n${rest}`;
          try {
            const kind = detectFileKind(name, head, config.labs);
            expect(['results', 'ropes']).toContain(kind.kind);
            expect(kind.header.length).toBeGreaterThan(0);
          } catch (error) {
            expect(error).toBeInstanceOf(IngestError);
            expect(CODES.has((error as IngestError).code)).toBe(true);
          }
        },
      ),
      { seed: SEED, numRuns: 1500 },
    );
  });
});

/** Runs bytes through TextChunkDecoder in the given chunk sizes; returns the text or the error. */
async function decodeChunks(
  bytes: Uint8Array,
  chunkSizes: readonly number[],
  declared: 'utf-8' | 'latin1' | 'auto',
): Promise<{ text: string } | { error: unknown }> {
  let sniffed: ReturnType<typeof sniffEncoding>;
  try {
    sniffed = sniffEncoding(bytes.subarray(0, 64 * 1024), declared);
  } catch (error) {
    return { error };
  }
  const chunks: Buffer[] = [];
  let offset = 0;
  let i = 0;
  while (offset < bytes.length) {
    const size = Math.max(1, chunkSizes[i++ % Math.max(1, chunkSizes.length)] ?? 1);
    chunks.push(Buffer.from(bytes.subarray(offset, offset + size)));
    offset += size;
  }
  let text = '';
  try {
    const decoder = new TextChunkDecoder(sniffed);
    for (const chunk of chunks) text += decoder.decode(chunk);
    text += decoder.end();
    return { text };
  } catch (error) {
    return { error };
  }
}

describe('sniffEncoding and TextChunkDecoder on arbitrary bytes', () => {
  it('yield text or a typed error (BinaryContentError, EncodingError) and do not depend on how the bytes are chunked', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.uint8Array({ maxLength: 300 }),
        fc.array(fc.integer({ min: 1, max: 7 }), { minLength: 1, maxLength: 5 }),
        fc.constantFrom('utf-8' as const, 'latin1' as const, 'auto' as const),
        async (bytes, sizes, declared) => {
          const chunked = await decodeChunks(bytes, sizes, declared);
          const whole = await decodeChunks(bytes, [bytes.length || 1], declared);
          if ('error' in chunked) {
            expect(chunked.error instanceof BinaryContentError || chunked.error instanceof EncodingError).toBe(true);
            expect('error' in whole).toBe(true);
          } else {
            expect(whole).toEqual(chunked);
            expect(chunked.text).not.toMatch(/\r/);
          }
        },
      ),
      { seed: SEED, numRuns: 400 },
    );
  });

  it('decode any text written as UTF-8 (with or without BOM) or UTF-16LE with BOM back to itself, line endings folded to LF', async () => {
    // Oracle: Node's Buffer encoders. Text without NUL and control characters, as a CSV holds.
    const printable = fc
      .string({
        unit: fc.oneof(
          fc.constantFrom('a', 'Z', '0', ',', ';', '"', ' ', '\n', '\r\n', 'ä', 'ß', 'µ', '€', '中', '😀'),
          anyChar,
        ),
        maxLength: 200,
      })
      .filter((text) => !/[\u0000-\u0008\u000b\u000c\u000e-\u001f\r]/.test(text.replace(/\r\n/g, '')));
    await fc.assert(
      fc.asyncProperty(
        printable,
        fc.constantFrom('utf-8', 'utf-8-bom', 'utf-16le-bom'),
        fc.array(fc.integer({ min: 1, max: 9 }), { minLength: 1, maxLength: 4 }),
        async (text, form, sizes) => {
          fc.pre(text.length > 0);
          const body =
            form === 'utf-16le-bom'
              ? Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(text, 'utf16le')])
              : Buffer.concat([
                  form === 'utf-8-bom' ? Buffer.from([0xef, 0xbb, 0xbf]) : Buffer.alloc(0),
                  Buffer.from(text, 'utf8'),
                ]);
          const decoded = await decodeChunks(body, sizes, 'auto');
          expect(decoded).toEqual({ text: text.replace(/\r\n/g, '\n') });
        },
      ),
      { seed: SEED, numRuns: 300 },
    );
  });
});

// ---- Whole files through ingestFile into a store ------------------------------------------------

interface GeneratedRow {
  /** Cells before quoting. */
  cells: string[];
  /** null: a valid row; else the code its refusal must carry. */
  expect: string | null;
  /** Write the row with ';' between fields (a mixed-delimiter junk row). */
  semicolons?: boolean;
  /** Drop the last field (a ragged row). */
  short?: boolean;
}

const validCt = fc.oneof(
  fc.double({ min: 5, max: 39.9, noNaN: true }).map((value) => value.toFixed(2)),
  fc.integer({ min: 1, max: 39 }).map(String),
  fc.constantFrom('Undetermined', 'not detected', 'NO CT', '', '>40', '40', '40.00', '45'),
);
const junkCt = fc.constantFrom(
  ['1e3', 'bad-ct'],
  ['-5', 'bad-ct'],
  ['NaN', 'bad-ct'],
  ['35,2', 'bad-ct'],
  ['>30', 'bad-ct'],
  ['0', 'ct-out-of-range'],
  ['61', 'ct-out-of-range'],
  ['positive', 'bad-ct'],
);
const freeText = fc
  .string({ unit: fc.oneof(fc.constantFrom('a', 'B', '1', ' ', ',', '"', '\n', 'é', ';'), anyChar), maxLength: 12 })
  .filter((text) => !/[\u0000-\u0008\u000b-\u001f\u007f]/.test(text));

function validRow(index: number): fc.Arbitrary<GeneratedRow> {
  return fc
    .record({
      assay: fc.constantFrom(...(Object.values(NORTHFIELD_ASSAYS) as string[])),
      ct: validCt,
      status: fc.oneof(freeText, fc.constant('Final')),
      caseNo: freeText,
      idSuffix: fc.constantFrom('', 'é', 'x y'),
    })
    .map(({ assay, ct, status, caseNo, idSuffix }) => ({
      // Unique sample IDs that no site pattern and no planned-ID grammar claims.
      cells: [caseNo, `PB-${index}${idSuffix}`, assay, ct, 'Negative', 'PASS', '2026-08-03', '2026-08-06', status],
      expect: null,
    }));
}

function junkRow(index: number): fc.Arbitrary<GeneratedRow> {
  const base = (ct = '31.00'): string[] => [
    `J${index}`,
    `PJ-${index}`,
    NORTHFIELD_ASSAYS.PRRSV,
    ct,
    'Positive',
    'PASS',
    '2026-08-03',
    '2026-08-06',
    'Final',
  ];
  return fc.oneof(
    junkCt.map(([ct, code]): GeneratedRow => ({ cells: base(ct), expect: code })),
    fc.constant<GeneratedRow>({
      cells: base().map((cell, i) => (i === 2 ? 'PEDV RT-PCR' : cell)),
      expect: 'unknown-assay',
    }),
    fc.constant<GeneratedRow>({ cells: base().map((cell, i) => (i === 1 ? '' : cell)), expect: 'missing-value' }),
    fc.constant<GeneratedRow>({ cells: base().map((cell, i) => (i === 6 ? '2026-13-45' : cell)), expect: 'bad-date' }),
    fc.constant<GeneratedRow>({ cells: base(), expect: 'ragged-row', short: true }),
    fc.constant<GeneratedRow>({ cells: [...base(), 'extra'], expect: 'ragged-row' }),
    fc.constant<GeneratedRow>({ cells: base(), expect: 'ragged-row', semicolons: true }),
    // A 100 KB Ct cell: refused, and the value kept in the refusal is cut to 200 characters.
    fc.constant<GeneratedRow>({ cells: base('9'.repeat(100 * 1024)), expect: 'bad-ct' }),
  );
}

/** Quotes a cell when it must be (delimiter, quote, line break) and sometimes when it need not be. */
function quote(cell: string, always: boolean): string {
  return always || /[",;\n]/.test(cell) ? `"${cell.replace(/"/g, '""')}"` : cell;
}

interface GeneratedFile {
  bytes: Buffer;
  rows: (GeneratedRow & { line: number })[];
}

const generatedFile: fc.Arbitrary<GeneratedFile> = fc
  .integer({ min: 1, max: 40 })
  .chain((count) =>
    fc.tuple(
      fc.tuple(
        ...Array.from({ length: count }, (_, i) =>
          fc.oneof({ weight: 3, arbitrary: validRow(i) }, { weight: 2, arbitrary: junkRow(i) }),
        ),
      ),
      fc.array(fc.boolean(), { minLength: count, maxLength: count }),
      fc.constantFrom('\n', '\r\n'),
      fc.constantFrom('utf-8', 'utf-8-bom', 'utf-16le-bom'),
      fc.boolean(),
    ),
  )
  .map(([rows, quoteAll, eol, form, finalEol]) => {
    const out: string[] = [NORTHFIELD_HEADER.join(',')];
    let line = 2;
    const placed = rows.map((row, i) => {
      const cells = row.short ? row.cells.slice(0, -1) : row.cells;
      const text = cells.map((cell) => quote(cell, quoteAll[i]!)).join(row.semicolons ? ';' : ',');
      const at = line;
      // A record starts on the line after the previous one ended; quoted line breaks count.
      line += 1 + (text.match(/\n/g)?.length ?? 0);
      out.push(text.replace(/\n/g, eol));
      return { ...row, line: at };
    });
    const textBody = out.join(eol) + (finalEol ? eol : '');
    const bytes =
      form === 'utf-16le-bom'
        ? Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(textBody, 'utf16le')])
        : Buffer.concat([
            form === 'utf-8-bom' ? Buffer.from([0xef, 0xbb, 0xbf]) : Buffer.alloc(0),
            Buffer.from(textBody, 'utf8'),
          ]);
    return { bytes, rows: placed };
  });

let fileCounter = 0;
async function ingestBytes(bytes: Buffer, name = 'nvdl_prop.csv'): Promise<{ receipt: Receipt; store: Store }> {
  const file = path.join(tmp, `${fileCounter++}-${name}`);
  fs.writeFileSync(file, bytes);
  const store = new Store(':memory:');
  try {
    const receipt = await ingestFile(file, { config, store, now: () => new Date('2026-12-01T12:00:00Z') });
    return { receipt, store };
  } finally {
    fs.rmSync(file, { force: true });
  }
}

function storedCtsInRange(store: Store): void {
  const outside = store.db
    .prepare('SELECT COUNT(*) AS n FROM results_read WHERE ct IS NOT NULL AND NOT (ct > 0 AND ct < cycle_limit)')
    .get() as { n: number };
  expect(outside.n).toBe(0);
  // The file transaction writes with foreign-key enforcement off (parents first, by
  // construction): SQLite's own check must find nothing wrong afterwards.
  expect(store.db.pragma('foreign_key_check')).toEqual([]);
  expect(store.db.pragma('foreign_keys', { simple: true })).toBe(1);
}

describe('ingestFile on whole generated exports', () => {
  it('stores every valid row, refuses every junk row with its code and line, and stored + refused = data rows', async () => {
    await fc.assert(
      fc.asyncProperty(generatedFile, async ({ bytes, rows }) => {
        const { receipt, store } = await ingestBytes(bytes);
        try {
          expect(receipt.status, JSON.stringify(receipt.reason)).toBe('accepted');
          const valid = rows.filter((row) => row.expect === null);
          const junk = rows.filter((row) => row.expect !== null);
          expect(receipt.rows.accepted + receipt.rows.rejected).toBe(rows.length);
          expect(receipt.rows.accepted).toBe(valid.length);
          const stored = store.db
            .prepare(
              'SELECT r.line, s.sample_id AS sampleId FROM results r JOIN samples s ON s.id = r.sample ORDER BY r.line',
            )
            .all() as { line: number; sampleId: string }[];
          expect(stored).toEqual(valid.map((row) => ({ line: row.line, sampleId: normaliseSampleId(row.cells[1]!) })));
          const refused = store.db
            .prepare('SELECT line, code, length(value) AS valueLength FROM rejected_rows ORDER BY line')
            .all() as { line: number; code: string; valueLength: number | null }[];
          expect(refused.map(({ line, code }) => ({ line, code }))).toEqual(
            junk.map((row) => ({ line: row.line, code: row.expect })),
          );
          for (const row of refused) expect(row.valueLength ?? 0).toBeLessThanOrEqual(200);
          storedCtsInRange(store);
        } finally {
          store.close();
        }
      }),
      { seed: SEED, numRuns: 120 },
    );
  });

  it('answers arbitrary bytes with a receipt (accepted, or rejected with a code), never an exception, and stores no Ct out of range', async () => {
    const header = Buffer.from(NORTHFIELD_HEADER.join(',') + '\n');
    const bytes = fc.oneof(
      fc.uint8Array({ maxLength: 600 }).map((raw) => Buffer.from(raw)),
      // Past the header check, into row parsing: a valid header, then noise.
      fc.uint8Array({ maxLength: 600 }).map((raw) => Buffer.concat([header, Buffer.from(raw)])),
      fc.string({ maxLength: 400 }).map((text) => Buffer.concat([header, Buffer.from(text)])),
    );
    await fc.assert(
      fc.asyncProperty(
        bytes,
        fc.constantFrom('nvdl_bytes.csv', 'oahl_bytes.csv', 'bytes.csv'),
        async (content, name) => {
          const { receipt, store } = await ingestBytes(content, name);
          try {
            expect(['accepted', 'rejected']).toContain(receipt.status);
            if (receipt.status === 'rejected') expect(CODES.has(receipt.reason!.code)).toBe(true);
            for (const row of receipt.rejectedRows) expect(CODES.has(row.code)).toBe(true);
            const counts = store.counts();
            if (receipt.status === 'rejected') expect(counts.results + counts.ropes).toBe(0);
            else expect(counts.results + counts.ropes + counts.rejectedRows).toBeGreaterThan(0);
            storedCtsInRange(store);
          } finally {
            store.close();
          }
        },
      ),
      { seed: SEED, numRuns: 300 },
    );
  });

  it('refuses a whole UTF-8 export with one invalid byte anywhere (invalid-encoding, naming its line) and stores none of its rows', async () => {
    // Oracle for invalidity: 0xFF never occurs in UTF-8 (RFC 3629, section 1).
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 1, max: 3000 }), fc.nat(), async (count, where) => {
        const lines = [NORTHFIELD_HEADER.join(',')];
        for (let i = 0; i < count; i++)
          lines.push(`C${i},PU-${i},${NORTHFIELD_ASSAYS.PRRSV},31.00,Positive,PASS,2026-08-03,2026-08-06,Final`);
        const badLine = 2 + (where % count);
        const text = lines.join('\n') + '\n';
        const bytes = Buffer.from(text, 'utf8');
        // Put the byte in the Report Status cell of the chosen line.
        let offset = 0;
        for (let l = 1; l < badLine; l++) offset = bytes.indexOf(0x0a, offset) + 1;
        const at = bytes.indexOf(0x0a, offset) - 1;
        const broken = Buffer.concat([bytes.subarray(0, at), Buffer.from([0xff]), bytes.subarray(at)]);
        const { receipt, store } = await ingestBytes(broken);
        try {
          expect(receipt.status).toBe('rejected');
          expect(receipt.reason).toMatchObject({ code: 'invalid-encoding', line: badLine });
          expect(store.counts().results).toBe(0);
        } finally {
          store.close();
        }
      }),
      { seed: SEED, numRuns: 25 },
    );
  });
});
