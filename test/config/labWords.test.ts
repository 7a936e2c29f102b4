/**
 * The lab profile's words (callWords, statusWords, statusColumns, controlFailedTokens,
 * reissueTokens) and config/corrections.yaml: defaults, and refusals that name the file and the
 * key path. Cases are edits of the demo config (src/demo/config); expected outcomes follow from
 * the schema (src/config/schema.ts) by hand. Check characters: ISO/IEC 7064 MOD 37-2.
 */
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { DEFAULT_CALL_WORDS, DEFAULT_STATUS_WORDS, loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { formatSampleId } from '../../src/plan/sampleId.js';
import { configCases, configError, demoText } from './configCases.js';

const { configWith } = configCases();
const northfield = demoText('labs/northfield.yaml');
const ostermark = demoText('labs/ostermark.yaml');

describe('lab words', () => {
  it('gives a lab without callWords or statusWords the English words, and its reissue marks as corrected', () => {
    const lab = loadConfig(DEMO_CONFIG_DIR).labById.get('northfield')!;
    expect(lab.callWords).toEqual(DEFAULT_CALL_WORDS);
    expect(lab.statusWords.preliminary).toEqual(DEFAULT_STATUS_WORDS.preliminary);
    expect(lab.statusWords.corrected).toEqual(expect.arrayContaining(['corrected', 'amended', 'Corrected', 'Amended']));
    // Status words are looked for in the report-status column, then in the call column.
    expect(lab.statusColumns).toEqual(['Report Status', 'Interpretation']);
    expect(lab.controlFailedTokens).toEqual(['FAIL', 'Failed']);
  });

  it("takes a lab's own words per class, keeping the English words for a class it leaves out", () => {
    const dir = configWith({
      'labs/ostermark.yaml': ostermark.replace(/callWords:\n( {2}.*\n)+/, 'callWords:\n  positive: [positiv]\n'),
    });
    const lab = loadConfig(dir).labById.get('ostermark')!;
    expect(lab.callWords.positive).toEqual(['positiv']);
    expect(lab.callWords.negative).toEqual(DEFAULT_CALL_WORDS.negative);
    // Ostermark has no status column: its Befund cell is searched.
    expect(lab.statusColumns).toEqual(['Befund']);
  });

  it('refuses one word with two meanings, naming where each comes from', () => {
    // "negativ" as a positive word beside "negativ" as a negative one (case and accents ignored).
    const twoCalls = configWith({
      'labs/ostermark.yaml': ostermark.replace('positive: [positiv]', 'positive: [positiv, NEGATIV]'),
    });
    const error = configError(twoCalls);
    expect(error).toMatchObject({
      file: path.join(twoCalls, 'labs', 'ostermark.yaml'),
      keyPath: 'callWords.negative[0]',
    });
    expect(error.detail).toMatch(/means call positive at callWords\.positive\[1\]/);
    // A control-failure word that the lab also uses as a negative call.
    const controlNegative = configWith({
      'labs/ostermark.yaml': ostermark.replace(
        'controlFailedTokens: [ungültig, fehlerhaft]',
        'controlFailedTokens: [ungültig, fehlerhaft, negativ]',
      ),
    });
    expect(configError(controlNegative)).toMatchObject({ keyPath: 'callWords.negative[0]' });
    // A status word against an English default call word.
    const statusCall = configWith({
      'labs/northfield.yaml': northfield.replace(
        'reissueTokens: [Corrected, Amended]',
        'reissueTokens: [Corrected, Amended]\nstatusWords:\n  final: [Final, Negative]\n',
      ),
    });
    const defaultClash = configError(statusCall);
    expect(defaultClash.keyPath).toBe('statusWords.final[1]');
    expect(defaultClash.detail).toMatch(/English default "negative"/);
  });

  it('lets a control-failure word also be the call word for invalid', () => {
    // The demo's Ostermark profile lists "ungültig" in both.
    expect(loadConfig(DEMO_CONFIG_DIR).labById.get('ostermark')!.callWords.invalid).toEqual(['ungültig']);
  });

  it('refuses a word with no letter or digit, which could never be found in a cell', () => {
    const dir = configWith({
      'labs/northfield.yaml': northfield.replace(
        'controlFailedTokens: [FAIL, Failed]',
        "controlFailedTokens: [FAIL, '--']",
      ),
    });
    expect(configError(dir)).toMatchObject({ keyPath: 'controlFailedTokens[1]' });
  });
});

describe('config/corrections.yaml', () => {
  const meant = formatSampleId({ siteCode: 'HCF', round: 3, sequence: 12 });
  // One substitution in the sequence (012 -> 013), the check character kept: MOD 37-2 refuses it.
  const written = meant.replace('-012', '-013');

  it('is optional, and reads confirmed corrections normalised', () => {
    expect(loadConfig(DEMO_CONFIG_DIR).corrections).toEqual([]);
    const dir = configWith({
      'corrections.yaml': `sampleIds:\n  - written: ' ${written.toLowerCase()} '\n    meant: ${meant.toLowerCase()}\n    file: nvdl_results_2026-08-20.csv\n    line: 14\n    note: confirmed with the lab by phone\n`,
    });
    expect(loadConfig(dir).corrections).toEqual([
      { written, meant, file: 'nvdl_results_2026-08-20.csv', line: 14, note: 'confirmed with the lab by phone' },
    ]);
  });

  it('refuses a meant planned ID with a wrong check character, a line without its file, and a correction to itself', () => {
    const wrongCheck = configWith({ 'corrections.yaml': `sampleIds:\n  - written: X-1\n    meant: ${written}\n` });
    const error = configError(wrongCheck);
    expect(error).toMatchObject({ file: path.join(wrongCheck, 'corrections.yaml'), keyPath: 'sampleIds[0].meant' });
    expect(error.detail).toMatch(/check character/);
    expect(
      configError(
        configWith({ 'corrections.yaml': `sampleIds:\n  - written: ${written}\n    meant: ${meant}\n    line: 3\n` }),
      ),
    ).toMatchObject({ keyPath: 'sampleIds[0].line' });
    expect(
      configError(configWith({ 'corrections.yaml': `sampleIds:\n  - written: ${meant}\n    meant: ' ${meant}'\n` })),
    ).toMatchObject({ keyPath: 'sampleIds[0].meant' });
    expect(
      configError(configWith({ 'corrections.yaml': `sampleIds:\n  - written: ${written}\n    mean: ${meant}\n` }))
        .keyPath,
    ).toMatch(/^sampleIds\[0\]/);
  });
});
