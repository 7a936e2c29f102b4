/**
 * Configured patterns (samplePattern, fileNamePattern) match in linear time, are refused at
 * load when they need backtracking, and still match what the demo's patterns matched with
 * JavaScript's RegExp.
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import fc from 'fast-check';
import { RE2JS } from 're2js';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import {
  compileConfiguredPattern,
  compilePatternSet,
  PatternSyntaxError,
  revivePattern,
} from '../../src/config/pattern.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import {
  HOLLOW_CREEK_ROUNDS,
  TAMSIN_RIDGE_ROUNDS,
  hollowCreekRound,
  tamsinRidgeRound,
} from '../../src/demo/scenario.js';
import { locationFromPattern } from '../../src/ingest/sampleLocation.js';
import { patternSampleId, writeManySiteConfig } from '../helpers/hardening.js';
import { configCases, configError, demoText } from './configCases.js';

const { configWith } = configCases();

// Nested quantifiers: a backtracking engine tries every way of splitting the run of a's
// between the two + before it gives up on a text that does not end the way the pattern wants,
// about 2^n ways for n a's (Cox 2007, "Regular Expression Matching Can Be Simple And Fast").
const CATASTROPHIC = '((a+)+)$';
// 34 characters: 33 a's and a character that makes every split fail.
const HOSTILE_ID = `${'a'.repeat(33)}!`;

function patternError(source: string, groups: string[] = []): PatternSyntaxError {
  try {
    compileConfiguredPattern(source, groups);
  } catch (error) {
    if (error instanceof PatternSyntaxError) return error;
    throw error;
  }
  throw new Error(`expected ${source} to be refused`);
}

describe('compileConfiguredPattern', () => {
  it('answers a catastrophic pattern on a 34-character ID at once', () => {
    const pattern = compileConfiguredPattern(CATASTROPHIC);
    const started = performance.now();
    // The match exists only where the text ends in a's: this one ends in "!", so none.
    expect(pattern.test(HOSTILE_ID)).toBe(false);
    expect(pattern.exec(HOSTILE_ID)).toBeNull();
    // RE2 runs in time linear in the text (Cox 2007); the bound is generous on purpose: the
    // point is that it returns. RegExp's time on such an ID grows about fourfold with every two
    // more a's (about a second at 26 characters on the test machine, minutes at 34).
    expect(performance.now() - started).toBeLessThan(2000);
    // And it still matches what it should (hand-checked: the whole run of a's before the end).
    expect(pattern.exec(`${'a'.repeat(33)}`)).toEqual({});
    expect(compileConfiguredPattern('(?<run>(a+)+)$').exec(`x${'a'.repeat(40)}`)).toEqual({ run: 'a'.repeat(40) });
  });

  it('never lets a sample pattern hold up the mapping of a row', () => {
    // A site whose samplePattern nests quantifiers in its barn group, placed through the ingest
    // code path (locationFromPattern) with an ID that matches no split.
    const demo = "'^TR-(?<barn>N[12])-(?<pen>\\d{1,2})-(?<date>\\d{8})$'";
    expect(demoText('sites.yaml')).toContain(demo);
    const dir = configWith({
      'sites.yaml': demoText('sites.yaml').replace(demo, () => "'^(?<barn>(N+)+1)-(?<pen>\\d+)$'"),
    });
    const config = loadConfig(dir);
    const started = performance.now();
    expect(locationFromPattern(`${'N'.repeat(33)}!`, config.sites, '2026-08-05')).toBeUndefined();
    expect(performance.now() - started).toBeLessThan(2000);
    // Hand-checked: N1-7 is barn N1, pen 7 of Tamsin Ridge.
    expect(locationFromPattern('N1-7', config.sites, '2026-08-05')).toMatchObject({
      siteId: 'tamsin-ridge',
      barnId: 'N1',
      penId: '7',
      hungOn: '2026-08-05',
    });
  });

  it('gives named groups, case-insensitively, and undefined for a group that took no part', () => {
    const pattern = compileConfiguredPattern('^TR-(?<barn>N[12])-(?<pen>\\d{1,2})(?:-(?<date>\\d{8}))?$');
    expect(pattern.exec('tr-n1-07')).toEqual({ barn: 'n1', pen: '07', date: undefined });
    expect(pattern.exec('TR-N2-3-20260805')).toEqual({ barn: 'N2', pen: '3', date: '20260805' });
    expect(pattern.exec('TR-N3-3')).toBeNull();
    expect(pattern.test('prefix TR-N1-1')).toBe(false);
    expect(compileConfiguredPattern('^nvdl_').test('NVDL_2026.csv')).toBe(true);
  });

  it("gives the groups a Matcher's find() and group() give, on generated texts", () => {
    // Oracle: re2js's Matcher, which finds the match's bounds first and then its groups.
    const sources = [
      '^G001-(?<barn>B\\d+)-(?<pen>\\d{1,3})-(?<date>\\d{8})$',
      '^TR-(?<barn>N[12])-(?<pen>\\d{1,2})(?:-(?<date>\\d{8}))?$',
      '(?<barn>N\\d)/(?<pen>\\d+)',
      '(?<barn>a*)(?<pen>a|b)?(?<date>b*)',
      '-(?<barn>X)(?<pen>\\d)$',
    ];
    const alphabet = ['G', '0', '1', '-', 'B', '7', 'n', 'N', '2', '/', 'a', 'b', 'x', 'X', 'T', 'R', 'é'];
    const text = fc.oneof(
      fc.array(fc.constantFrom(...alphabet), { maxLength: 24 }).map((chars) => chars.join('')),
      fc.constantFrom('G001-B1-7-20260805', 'g001-b12-250-20260805', 'TR-N1-07', 'x N1/4 N2/5', 'lab-X1'),
    );
    for (const source of sources) {
      const pattern = compileConfiguredPattern(source);
      const reference = RE2JS.compile(source, RE2JS.CASE_INSENSITIVE);
      const names = Object.keys(reference.namedGroups());
      fc.assert(
        fc.property(text, (input) => {
          const matcher = reference.matcher(input);
          const expected = matcher.find()
            ? Object.fromEntries(names.map((name) => [name, matcher.group(name) ?? undefined]))
            : null;
          expect(pattern.exec(input)).toEqual(expected);
        }),
        { numRuns: 400 },
      );
    }
  });

  it('refuses lookaround and backreferences, saying they are not supported', () => {
    // RE2 syntax has neither (RE2 wiki, "Syntax": "NOT SUPPORTED").
    for (const source of ['(a)\\1', '(?<x>a)\\k<x>', '^TR-(?=N)', '^TR-(?!X)', '(?<=TR-)N1', '(?<!X)N1']) {
      expect(patternError(source).message, source).toContain('lookaround or a backreference, which are not supported');
    }
    expect(patternError('[abc').message).toContain('missing closing ]');
    expect(patternError('^(?<barn>x)$', ['barn', 'pen']).message).toBe('needs a named group (?<pen>...)');
    expect(patternError('a'.repeat(1001)).message).toContain('at most 1000');
  });

  it('compiles again from its source after a structured clone (the parse worker)', () => {
    const pattern = compileConfiguredPattern('^TR-(?<barn>N[12])-(?<pen>\\d{1,2})$');
    const cloned = structuredClone(pattern);
    // What the worker receives: the source, not the automaton.
    expect(cloned).toEqual({ source: pattern.source });
    expect(revivePattern(cloned).exec('TR-N2-11')).toEqual({ barn: 'N2', pen: '11' });
    expect(revivePattern(pattern)).toBe(pattern);
  });
});

describe('compilePatternSet', () => {
  it('finds exactly the patterns that match, as asking each pattern alone does', () => {
    // Oracle: each pattern's own test(). Patterns: the generated sites' shape (test/helpers/
    // hardening.ts), the demo's, an unanchored one, an alternation, one anchored at the end only.
    const sources = [
      ...Array.from(
        { length: 12 },
        (_, i) => `^G${String(i + 1).padStart(3, '0')}-(?<barn>B\\d+)-(?<pen>\\d{1,3})-(?<date>\\d{8})$`,
      ),
      '^TR-(?<barn>N[12])-(?<pen>\\d{1,2})-(?<date>\\d{8})$',
      '(?<barn>N\\d)/(?<pen>\\d+)',
      '^(?:west|east)-(?<barn>\\w+)-(?<pen>\\d+)$',
      '-(?<barn>X)(?<pen>\\d)$',
      CATASTROPHIC,
    ];
    const patterns = sources.map((source) => compileConfiguredPattern(source));
    const set = compilePatternSet(patterns);
    const texts = [
      'G001-B1-7-20260805',
      'g012-b4-250-20260805',
      'G013-B1-7-20260805',
      'G001-B1-7-2026080',
      'xG001-B1-7-20260805',
      'TR-N1-07-20260805',
      'tr-n2-3-20260805',
      'a N1/4 b',
      'WEST-F1-3',
      'north-F1-3',
      'lab-X1',
      'lab-X12',
      HOSTILE_ID,
      'aaaa',
      '',
      'HCF08-0146',
    ];
    for (const text of texts) {
      const expected = patterns.flatMap((pattern, index) => (pattern.test(text) ? [index] : []));
      expect(
        [...set.matching(text)].sort((a, b) => a - b),
        text,
      ).toEqual(expected);
    }
    expect(compilePatternSet([]).matching('anything')).toEqual([]);
  });

  it("places an ID that two sites' patterns match in the site that has the barn and pen", () => {
    // Both sites take any X-<barn>-<pen>; only Hollow Creek has barn F1 (pen A3), only Tamsin
    // Ridge barn N1 (pen 7): the demo layouts, hand-checked.
    const generic = "'^X-(?<barn>\\w+)-(?<pen>\\w+)$'";
    const sites = demoText('sites.yaml')
      .replace('    code: HCF\n', () => `    code: HCF\n    samplePattern: ${generic}\n`)
      .replace("'^TR-(?<barn>N[12])-(?<pen>\\d{1,2})-(?<date>\\d{8})$'", () => generic);
    const config = loadConfig(configWith({ 'sites.yaml': sites }));
    expect(config.sites.map((site) => site.samplePattern?.source)).toEqual([
      generic.slice(1, -1),
      generic.slice(1, -1),
    ]);
    expect(locationFromPattern('X-F1-A3', config.sites, '2026-08-05')).toMatchObject({
      siteId: 'hollow-creek',
      barnId: 'F1',
      penId: 'A3',
    });
    expect(locationFromPattern('X-N1-7', config.sites, '2026-08-05')).toMatchObject({
      siteId: 'tamsin-ridge',
      barnId: 'N1',
      penId: '7',
    });
    expect(locationFromPattern('x-f1-a03', config.sites, '2026-08-05')).toMatchObject({
      siteId: 'hollow-creek',
      barnId: 'F1',
      penId: 'A3',
    });
    expect(locationFromPattern('X-Q9-1', config.sites, '2026-08-05')).toBeUndefined();
  });
});

describe('locationFromPattern', () => {
  it('places every ID as a list of sites never asked before does, whatever came before it', () => {
    // Oracle: the same list copied for each ID, so no site is remembered as the last to place
    // one. Three generated sites (one pattern per site: an ID has at most one answer); IDs of
    // known pens, pens the barn lacks, barns the site lacks, dates the calendar lacks, other sites.
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-location-'));
    try {
      writeManySiteConfig(dir, { sites: 3, barnsPerSite: 2, pensPerRow: 4 });
      const { sites } = loadConfig(dir);
      const id = fc.oneof(
        fc
          .tuple(
            fc.integer({ min: 0, max: 4 }),
            fc.integer({ min: 1, max: 3 }),
            fc.integer({ min: 1, max: 10 }),
            fc.constantFrom('20260805', '20261345'),
          )
          .map(([site, barn, pen, date]) => patternSampleId(site, barn, pen, date)),
        fc.constantFrom('G001-B1-3', 'HCF08-0146', '', 'g002-b2-07-20260805'),
      );
      fc.assert(
        fc.property(fc.array(id, { minLength: 1, maxLength: 12 }), (ids) => {
          for (const sampleId of ids) {
            expect(locationFromPattern(sampleId, sites, '2026-08-05'), sampleId).toEqual(
              locationFromPattern(sampleId, [...sites], '2026-08-05'),
            );
          }
        }),
        { numRuns: 200 },
      );
    } finally {
      fs.rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('patterns at load', () => {
  it('refuses a sample pattern with lookahead at its key path', () => {
    const dir = configWith({ 'sites.yaml': demoText('sites.yaml').replace("'^TR-(?<barn>", "'^TR-(?=N)(?<barn>") });
    const error = configError(dir);
    expect(error.keyPath).toBe('sites[1].samplePattern');
    expect(error.detail).toContain('not supported');
  });

  it('refuses a file-name pattern with a backreference at its key path', () => {
    const dir = configWith({
      'labs/northfield.yaml': demoText('labs/northfield.yaml').replace(
        "fileNamePattern: '^nvdl_'",
        "fileNamePattern: '^(nv)dl_\\1'",
      ),
    });
    const error = configError(dir);
    expect(error.file.endsWith('northfield.yaml')).toBe(true);
    expect(error.keyPath).toBe('fileNamePattern');
    expect(error.detail).toContain('not supported');
  });

  it("matches what the demo's patterns matched with RegExp, on every name and cell of the demo's files", async () => {
    // Oracle: JavaScript's RegExp with the i flag, which compiled these patterns before; the
    // demo's patterns have no nested quantifier, so it answers them quickly.
    const config = loadConfig(DEMO_CONFIG_DIR);
    const drops = [
      ...(await Promise.all(HOLLOW_CREEK_ROUNDS.map((_, round) => hollowCreekRound(config, round, [])))).flat(),
      ...TAMSIN_RIDGE_ROUNDS.flatMap((_, round) => tamsinRidgeRound(config, round, [])),
    ];
    const names = [...drops.map((drop) => drop.name), 'NVDL_upper.csv', 'x_nvdl_.csv', 'oahl.csv', 'OAHL_befund.csv'];
    const cells = new Set(
      drops.flatMap((drop) =>
        drop.bytes
          .toString('latin1')
          .split(/[\n;,]/)
          .map((cell) => cell.trim()),
      ),
    );
    for (const variant of ['tr-n1-07-20260805', 'TR-N3-07-20260805', 'TR-N1-7-2026080', 'xTR-N1-07-20260805'])
      cells.add(variant);
    let located = 0;
    for (const lab of config.labs) {
      const native = new RegExp(lab.fileNamePattern!.source, 'i');
      for (const name of names) expect(lab.fileNamePattern!.test(name), `${lab.id} ${name}`).toBe(native.test(name));
    }
    for (const site of config.sites.filter((candidate) => candidate.samplePattern)) {
      const native = new RegExp(site.samplePattern!.source, 'i');
      for (const cell of cells) {
        const expected = native.exec(cell)?.groups ?? null;
        expect(site.samplePattern!.exec(cell), cell).toEqual(expected === null ? null : { ...expected });
        if (expected !== null) located++;
      }
    }
    // The comparison saw the pattern-coded tubes of the Tamsin Ridge rounds, not only misses.
    expect(located).toBeGreaterThan(20);
  });
});
