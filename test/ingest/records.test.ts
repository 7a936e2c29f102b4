import { createHash } from 'node:crypto';
import fc from 'fast-check';
import { NORTHFIELD_HEADER } from '../../src/demo/labFiles.js';
/**
 * One CSV record to a stored row or a refusal naming line, field and code. Context comes from
 * the demo config (src/demo/config); expected outcomes follow from its profiles and layouts, by
 * hand. Planned sample IDs are made with formatSampleId (ISO/IEC 7064 MOD 37-2, which detects
 * every single substitution and adjacent transposition) and then mistyped.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { compileConfiguredPattern } from '../../src/config/pattern.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { detectFileKind } from '../../src/ingest/detect.js';
import { plannedIdChecker } from '../../src/ingest/plannedIds.js';
import { canonicalPenKey, contentKey, leading52Bits, parseDateCell } from '../../src/ingest/recordCells.js';
import { locationFromPattern } from '../../src/ingest/sampleLocation.js';
import { mapResultRow, type ResultContext } from '../../src/ingest/resultRecords.js';
import { mapRopeRow, type RopeContext } from '../../src/ingest/ropeSheetRecords.js';
import { formatSampleId } from '../../src/plan/sampleId.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const check = plannedIdChecker(config);

// The demo lab's export header, as the demo writes it.
const NF_COLUMNS = NORTHFIELD_HEADER;
const nfKind = detectFileKind('nvdl_t.csv', NF_COLUMNS.join(',') + '\n', config.labs);
if (nfKind.kind !== 'results') throw new Error('northfield header not recognised');
const nfContext: ResultContext = {
  fileName: 'nvdl_t.csv',
  lab: nfKind.lab,
  columnIndex: nfKind.columnIndex,
  assayById: config.assayById,
  sites: config.sites,
  plannedIdCheck: check,
};

type NfRow = Partial<Record<(typeof NF_COLUMNS)[number], string>>;
const base: NfRow = {
  'Case No': 'NV26-01000',
  'Sample ID': 'HC-0803-F1-01',
  'Test Name': 'PRRSV NA/EU RT-PCR',
  'Ct Value': '31.20',
  Interpretation: 'Positive',
  'Internal Control': 'PASS',
  'Collection Date': '2026-08-03',
  'Report Date': '2026-08-06',
  'Report Status': 'Final',
};
const nf = (overrides: NfRow = {}, line = 2) =>
  mapResultRow(
    NF_COLUMNS.map((column) => ({ ...base, ...overrides })[column] ?? ''),
    line,
    nfContext,
  );

const ROPE_COLUMNS = ['sample_id', 'site', 'barn', 'pen', 'hung_on', 'notes'] as const;
const ropeKind = detectFileKind('ropes.csv', ROPE_COLUMNS.join(',') + '\n', config.labs);
const ropeContext: RopeContext = {
  fileName: 'ropes.csv',
  columnIndex: ropeKind.columnIndex,
  sites: config.sites,
  plannedIdCheck: check,
};
type RopeCells = Partial<Record<(typeof ROPE_COLUMNS)[number], string>>;
const ropeBase: RopeCells = {
  sample_id: 'HC-0803-F1-01',
  site: 'hollow-creek',
  barn: 'F1',
  pen: 'A1',
  hung_on: '2026-08-03',
  notes: '',
};
const rope = (overrides: RopeCells = {}, line = 2) =>
  mapRopeRow(
    ROPE_COLUMNS.map((column) => ({ ...ropeBase, ...overrides })[column] ?? ''),
    line,
    ropeContext,
  );

describe('mapResultRow', () => {
  it('maps a well-formed row with the lab cutoffs and a content key', () => {
    const outcome = nf();
    expect(outcome.ok).toBe(true);
    if (!outcome.ok) return;
    expect(outcome.row).toMatchObject({
      line: 2,
      labId: 'northfield',
      sampleId: 'HC-0803-F1-01',
      assayId: 'PRRSV',
      ct: 31.2,
      resultClass: 'positive',
      loadBand: 'low',
      collectedOn: '2026-08-03',
      reportedOn: '2026-08-06',
      positiveBelow: 36,
      cycleLimit: 40,
      callDiffers: false,
      markedReissue: false,
    });
    // The content key is an integer of 52 bits (it must fit a double exactly, IEEE 754).
    expect(Number.isSafeInteger(outcome.row.contentKey)).toBe(true);
    expect(outcome.row.contentKey).toBeGreaterThanOrEqual(0);
    expect(outcome.row.contentKey).toBeLessThan(2 ** 52);
    // The same row in another file, on another line, has the same key (what makes re-drops idempotent)...
    const again = nf({}, 99);
    expect(again.ok && again.row.contentKey).toBe(outcome.row.contentKey);
    // ...and any change to what the lab reported gives another one (a reissue is a new row).
    for (const change of [
      { 'Ct Value': '31.3' },
      { 'Report Date': '2026-08-07' },
      { 'Report Status': 'Corrected' },
      { 'Case No': 'NV26-01001' },
      { Interpretation: 'Suspect' },
    ]) {
      const changed = nf(change);
      expect(changed.ok && changed.row.contentKey).not.toBe(outcome.row.contentKey);
    }
  });

  it('maps each row of a run as a file meeting it first does (what one row keeps for the next changes nothing)', () => {
    // Oracle: a new context per row, so nothing is kept from the row before. Neighbouring rows
    // repeat sample IDs, assays and dates, and some carry dates that are blank or no dates.
    const cell = <T extends string>(...values: T[]) => fc.constantFrom(...values);
    const row = fc.record({
      'Sample ID': cell('HC-0803-F1-01', 'hc-0803-f1-01', 'TR-N1-07-20260805', 'LAB-17'),
      'Test Name': cell('PRRSV NA/EU RT-PCR', 'Influenza A Matrix RT-PCR'),
      'Collection Date': cell('2026-08-03', '', '2026-02-30', '03.08.2026', '2026-08-04'),
      'Report Date': cell('2026-08-06', '', '2026-13-01'),
      'Ct Value': cell('31.20', 'Undetermined'),
    });
    fc.assert(
      fc.property(fc.array(fc.tuple(row, fc.integer({ min: 2, max: 9 })), { maxLength: 20 }), (rows) => {
        const context = { ...nfContext, plannedIdCheck: plannedIdChecker(config) };
        for (const [overrides, line] of rows) {
          const cells = NF_COLUMNS.map((column) => ({ ...base, ...overrides })[column] ?? '');
          const fresh = { ...nfContext, plannedIdCheck: plannedIdChecker(config) };
          expect(mapResultRow(cells, line, context)).toEqual(mapResultRow(cells, line, fresh));
        }
      }),
      { numRuns: 200 },
    );
  });

  it('reads the content key from the digest bytes as the first 13 hex digits of the digest', () => {
    // FIPS 180-2, appendix A.1: SHA-1("abc") = a9993e36 4706816a ba3e2571 7850c26c 9cd0d89d.
    expect(leading52Bits(createHash('sha1').update('abc').digest('binary'))).toBe(0xa9993e3647068);
    // Oracle: node:crypto's hex digest, cut to 13 digits and parsed (how stored keys were made).
    fc.assert(
      fc.property(fc.array(fc.string({ unit: 'binary' }), { minLength: 1, maxLength: 7 }), (parts) => {
        const hex = createHash('sha1').update(parts.join('\u001f')).digest('hex');
        expect(contentKey(parts)).toBe(Number.parseInt(hex.slice(0, 13), 16));
      }),
      { numRuns: 500 },
    );
    // Every nibble set: the largest key, 2^52 - 1.
    expect(leading52Bits('\u00ff'.repeat(20))).toBe(2 ** 52 - 1);
  });

  it('refuses an assay the lab profile does not name', () => {
    expect(nf({ 'Test Name': 'PEDV RT-PCR' }, 7)).toMatchObject({
      ok: false,
      rejection: { code: 'unknown-assay', line: 7, field: 'Test Name', value: 'PEDV RT-PCR' },
    });
  });

  it('refuses a date that does not fit the profile date format, including impossible days', () => {
    expect(nf({ 'Collection Date': '03.08.2026' })).toMatchObject({
      ok: false,
      rejection: { code: 'bad-date', field: 'Collection Date' },
    });
    // By hand: 2026 is not a leap year, so February has 28 days.
    expect(nf({ 'Report Date': '2026-02-29' })).toMatchObject({
      ok: false,
      rejection: { code: 'bad-date', field: 'Report Date' },
    });
    expect(nf({ 'Collection Date': '2026-13-01' })).toMatchObject({ ok: false, rejection: { code: 'bad-date' } });
  });

  it('refuses an empty sample ID', () => {
    expect(nf({ 'Sample ID': '  ' })).toMatchObject({
      ok: false,
      rejection: { code: 'missing-value', field: 'Sample ID' },
    });
  });

  it('refuses a bad Ct with the Ct column as the field', () => {
    expect(nf({ 'Ct Value': '1e3' })).toMatchObject({
      ok: false,
      rejection: { code: 'bad-ct', field: 'Ct Value', value: '1e3' },
    });
    expect(nf({ 'Ct Value': '0' })).toMatchObject({
      ok: false,
      rejection: { code: 'ct-out-of-range', field: 'Ct Value' },
    });
  });

  it('calls a result with a failed internal control invalid, also when the Ct cell says not detected', () => {
    const outcome = nf({ 'Ct Value': 'Undetermined', 'Internal Control': 'FAIL', Interpretation: 'Invalid' });
    expect(outcome).toMatchObject({ ok: true, row: { resultClass: 'invalid', ct: null, callDiffers: false } });
    // The lab's call alone can carry the control failure ("Failed" is a control-failed token).
    expect(nf({ 'Ct Value': '', 'Internal Control': '', Interpretation: 'Failed' })).toMatchObject({
      ok: true,
      row: { resultClass: 'invalid' },
    });
  });

  it('keeps a lab call that disagrees with the cutoffs and flags it for review', () => {
    expect(nf({ 'Ct Value': '37.5', Interpretation: 'Positive' })).toMatchObject({
      ok: true,
      row: { resultClass: 'suspect', callDiffers: true },
    });
  });

  it('marks a reissue by the report status column', () => {
    expect(nf({ 'Report Status': 'corrected' })).toMatchObject({
      ok: true,
      row: { markedReissue: true, reportStatus: 'corrected' },
    });
  });

  it('accepts a planned sample ID in any case and spacing and refuses one with a mistyped character', () => {
    const planned = formatSampleId({ siteCode: 'HCF', round: 3, sequence: 12 });
    expect(nf({ 'Sample ID': ` ${planned.toLowerCase().replace('-', ' - ')} ` })).toMatchObject({
      ok: true,
      row: { sampleId: planned },
    });
    // One digit mistyped (012 -> 013), check character kept.
    const substituted = planned.replace('-012', '-013');
    expect(nf({ 'Sample ID': substituted })).toMatchObject({
      ok: false,
      rejection: { code: 'bad-check-character', field: 'Sample ID', value: substituted },
    });
    // Two neighbours swapped (012 -> 021).
    const swapped = planned.replace('-012', '-021');
    expect(nf({ 'Sample ID': swapped })).toMatchObject({ ok: false, rejection: { code: 'bad-check-character' } });
    // A planned-looking ID of a site code that is not configured is someone else's numbering: kept.
    expect(nf({ 'Sample ID': 'ZZQ03-012X' })).toMatchObject({ ok: true, row: { sampleId: 'ZZQ03-012X' } });
  });

  it('places a sample ID that carries its own location through the site sample pattern', () => {
    // Demo Tamsin Ridge pattern: TR-<barn>-<pen>-<yyyyMMdd>; pen "07" is pen 7 of barn N1.
    expect(nf({ 'Sample ID': 'tr-n1-07-20260805', 'Collection Date': '2026-08-05' })).toMatchObject({
      ok: true,
      row: {
        sampleId: 'TR-N1-07-20260805',
        encodedRope: { siteId: 'tamsin-ridge', barnId: 'N1', penId: '7', hungOn: '2026-08-05' },
      },
    });
    // "1" and "01" name one pen (pens match as painted: canonicalPenKey), so both spellings place the same rope.
    expect(nf({ 'Sample ID': 'TR-N1-1-20260805' })).toMatchObject({
      ok: true,
      row: { encodedRope: { barnId: 'N1', penId: '1' } },
    });
    expect(nf({ 'Sample ID': 'TR-N1-01-20260805' })).toMatchObject({
      ok: true,
      row: { encodedRope: { barnId: 'N1', penId: '1' } },
    });
  });

  it('refuses a pattern sample ID naming a pen its barn does not have (unknown-pen), instead of keeping it unplaceable', () => {
    // Demo layout: barn N1 of Tamsin Ridge has 2 rows of 12 pens numbered continuously, 1..24; 99 and 25 are not pens.
    for (const id of ['TR-N1-99-20260805', 'TR-N1-25-20260805']) {
      expect(nf({ 'Sample ID': id }, 5)).toMatchObject({
        ok: false,
        rejection: { code: 'unknown-pen', line: 5, field: 'Sample ID', value: id },
      });
    }
    const outcome = nf({ 'Sample ID': 'TR-N1-99-20260805' });
    expect(!outcome.ok && outcome.rejection.message).toMatch(/pen "99".*barn N1.*tamsin-ridge/);
    // The last pen of the barn is a pen.
    expect(nf({ 'Sample ID': 'TR-N1-24-20260805' })).toMatchObject({ ok: true, row: { encodedRope: { penId: '24' } } });
  });

  it('refuses a pattern sample ID that names its pen but has no date anywhere', () => {
    const tamsin = config.siteById.get('TAMSIN-RIDGE')!;
    const noDate = { ...tamsin, samplePattern: compileConfiguredPattern('^TR-(?<barn>N[12])-(?<pen>\\d{1,2})$') };
    expect(locationFromPattern('TR-N2-03', [noDate], undefined)).toBe('no-date');
    expect(locationFromPattern('TR-N2-03', [noDate], '2026-08-05')).toMatchObject({
      barnId: 'N2',
      penId: '3',
      hungOn: '2026-08-05',
    });
    const context = { ...nfContext, sites: [noDate] };
    const cells = NF_COLUMNS.map(
      (column) => ({ ...base, 'Sample ID': 'TR-N2-03', 'Collection Date': '' })[column] ?? '',
    );
    expect(mapResultRow(cells, 4, context)).toMatchObject({
      ok: false,
      rejection: { code: 'no-collection-date', line: 4, field: 'Sample ID' },
    });
  });

  it('refuses a pattern sample ID whose encoded date does not exist, rather than guessing from the collection date', () => {
    // 2026-13-45 is no calendar date (common practice, no source: a mistyped label is refused, not repaired).
    expect(nf({ 'Sample ID': 'TR-N1-07-20261345' })).toMatchObject({
      ok: false,
      rejection: { code: 'bad-date', field: 'Sample ID' },
    });
  });
});

describe('mapRopeRow', () => {
  it('maps a rope to its site, barn and pen', () => {
    expect(rope()).toMatchObject({
      ok: true,
      row: {
        sampleId: 'HC-0803-F1-01',
        siteId: 'hollow-creek',
        barnId: 'F1',
        penId: 'A1',
        hungOn: '2026-08-03',
        warning: undefined,
      },
    });
    // Site by code or name, day-first dates.
    expect(rope({ site: 'HCF', hung_on: '03.08.2026' })).toMatchObject({
      ok: true,
      row: { siteId: 'hollow-creek', hungOn: '2026-08-03' },
    });
  });

  it('matches pen labels with leading zeros and any case to the layout ("a01" is A1, "1" is 01)', () => {
    expect(rope({ pen: 'a01' })).toMatchObject({ ok: true, row: { penId: 'A1' } });
    expect(rope({ barn: 'F2', pen: '1' })).toMatchObject({ ok: true, row: { penId: '01' } });
    expect(canonicalPenKey(' b 007 ')).toBe('B7');
  });

  it('refuses an unknown site, barn or pen with the field it names', () => {
    expect(rope({ site: 'elsewhere' }, 5)).toMatchObject({
      ok: false,
      rejection: { code: 'unknown-site', field: 'site', line: 5 },
    });
    expect(rope({ barn: 'F9' })).toMatchObject({ ok: false, rejection: { code: 'unknown-barn', field: 'barn' } });
    expect(rope({ pen: 'A21' })).toMatchObject({ ok: false, rejection: { code: 'unknown-pen', field: 'pen' } });
    expect(rope({ pen: '' })).toMatchObject({ ok: false, rejection: { code: 'missing-value', field: 'pen' } });
  });

  it('refuses a missing or unreadable hanging date', () => {
    expect(rope({ hung_on: '' })).toMatchObject({ ok: false, rejection: { code: 'missing-value', field: 'hung_on' } });
    expect(rope({ hung_on: '31/02/2026' })).toMatchObject({
      ok: false,
      rejection: { code: 'bad-date', field: 'hung_on' },
    });
  });

  it('keeps a rope in an empty pen with a warning', () => {
    expect(rope({ pen: 'B20' })).toMatchObject({ ok: true, row: { penId: 'B20' } });
    expect((rope({ pen: 'B20' }) as { row: { warning: string } }).row.warning).toContain('empty');
  });

  it('refuses a mistyped planned sample ID on a rope sheet', () => {
    const planned = formatSampleId({ siteCode: 'HCF', round: 4, sequence: 7 });
    expect(rope({ sample_id: planned })).toMatchObject({ ok: true, row: { sampleId: planned } });
    expect(rope({ sample_id: planned.replace('-007', '-008') })).toMatchObject({
      ok: false,
      rejection: { code: 'bad-check-character', field: 'sample_id' },
    });
  });
});

describe('parseDateCell', () => {
  it('reads the profile format, ISO dates and date-times, and refuses the rest', () => {
    expect(parseDateCell('05.08.2026', 'dd.MM.yyyy')).toBe('2026-08-05');
    expect(parseDateCell('2026-08-05', 'dd.MM.yyyy')).toBe('2026-08-05');
    expect(parseDateCell('2026-08-05T10:30:00', 'yyyy-MM-dd')).toBe('2026-08-05');
    expect(parseDateCell('05.08.2026 10:30', 'dd.MM.yyyy')).toBe('2026-08-05');
    expect(parseDateCell('32.08.2026', 'dd.MM.yyyy')).toBeUndefined();
    expect(parseDateCell('yesterday', 'yyyy-MM-dd')).toBeUndefined();
    expect(parseDateCell('', 'yyyy-MM-dd')).toBeUndefined();
  });
});
