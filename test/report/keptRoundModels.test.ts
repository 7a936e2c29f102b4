/**
 * A round's model kept beside its files (src/report/keptRoundModels.ts): read back it equals the
 * round it was written from, its pens parsed when first read; a file cut off, missing a line, of
 * another format or kept under another key is not taken, and neither are the rounds after it (they
 * are formed again from the store).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { roundModelText } from '../../src/analysis/roundDigests.js';
import { loadConfig } from '../../src/config/load.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { readKeptModels, ROUND_MODEL_FILE, roundModelFileText } from '../../src/report/keptRoundModels.js';
import { buildSiteRounds, type ResultInput, type SiteRound } from '../../src/rounds/roundModel.js';
import { resultInput, sheetRopeIn } from '../helpers/results.js';

const config = loadConfig(DEMO_CONFIG_DIR);
const site = config.siteById.get('HOLLOW-CREEK')!;

/** Two rounds of barn F1, a week apart: a positive, a negative with a lab call in other letters, an invalid. */
function twoRounds(): SiteRound[] {
  const rope = sheetRopeIn(site.id, 'F1');
  let id = 1;
  const pcr = (sampleId: string, ct: number | null, resultClass: ResultInput['resultClass'], labCall: string | null) =>
    resultInput({ id: id++, sampleId, ct, resultClass, positiveBelow: 36, suspectBelow: 40, labCall });
  return buildSiteRounds(
    site,
    [rope('S1', 'A1', '2026-08-03'), rope('S2', 'A2', '2026-08-03'), rope('S3', 'A1', '2026-08-10')],
    [pcr('S1', 28.4, 'positive', 'Positiv'), pcr('S2', null, 'negative', 'Négatif'), pcr('S3', null, 'invalid', null)],
  );
}

const dirs: string[] = [];
afterEach(() => {
  for (const dir of dirs.splice(0)) fs.rmSync(dir, { recursive: true, force: true });
});

/** A site folder with each round's model kept under `key-<n>`; returns it and the keys a build would ask for. */
function keptSite(rounds: SiteRound[]) {
  const siteDir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-kept-'));
  dirs.push(siteDir);
  const keys = rounds.map((round, index) => ({ id: round.id, key: `key-${index}` }));
  rounds.forEach((round, index) => {
    fs.mkdirSync(path.join(siteDir, round.id));
    fs.writeFileSync(
      path.join(siteDir, round.id, ROUND_MODEL_FILE),
      roundModelFileText(`key-${index}`, roundModelText(round)),
    );
  });
  const file = (index: number) => path.join(siteDir, rounds[index]!.id, ROUND_MODEL_FILE);
  const read = () =>
    readKeptModels(
      siteDir,
      keys.map((key) => ({ ...key, startOn: '', endOn: '', ropes: '', sampleIds: [] })),
    );
  return { keys, file, read };
}

describe('the kept round models', () => {
  it('read back equal to the rounds they were written from, with the same digests', () => {
    const rounds = twoRounds();
    expect(rounds).toHaveLength(2);
    const { read } = keptSite(rounds);
    const kept = read();
    expect(kept.map((model) => model.key)).toEqual(['key-0', 'key-1']);
    // Read through every property (pens included): the same values as the rounds written.
    expect(JSON.parse(JSON.stringify(kept.map((model) => model.model)))).toEqual(JSON.parse(JSON.stringify(rounds)));
    expect(kept.map((model) => model.digest)).toEqual(rounds.map((round) => roundModelText(round).digest));
    expect(kept.map((model) => roundModelText(model.model).digest)).toEqual(kept.map((model) => model.digest));
  });

  it("parse a barn's pens only when they are read, from the bytes read with the outline", () => {
    const rounds = twoRounds();
    const { read, file } = keptSite(rounds);
    const barn = read()[0]!.model.barns[0]!;
    expect(Object.getOwnPropertyDescriptor(barn, 'pens')?.get).toBeTypeOf('function');
    // The file changed after it was read: the pens come from what was read with the outline.
    fs.writeFileSync(file(0), fs.readFileSync(file(0), 'utf8').replace(/\n[^\n]*\n$/, '\n[broken\n'));
    expect(barn.pens.map((pen) => pen.penId)).toEqual(rounds[0]!.barns[0]!.pens.map((pen) => pen.penId));
    expect(Object.getOwnPropertyDescriptor(barn, 'pens')?.get).toBeUndefined();
  });

  it('take none from the first file cut off, missing a line, of another format or another key on', () => {
    const rounds = twoRounds();
    const spoil: [string, (text: string, key: string) => string][] = [
      ['cut off inside its pens', (text) => text.slice(0, -20)],
      ['cut off after a line', (text) => text.slice(0, text.lastIndexOf('\n', text.length - 2) + 1)],
      ['empty', () => ''],
      ['another format', (text) => text.replace('ropewatch.round-model/v2', 'ropewatch.round-model/v1')],
      ['another key', (text, key) => text.replace(`"${key}"`, '"key-9"')],
      ['a damaged outline', (text) => text.replace(/\n\{/, '\n{{')],
    ];
    for (const [what, change] of spoil) {
      const first = keptSite(rounds);
      fs.writeFileSync(first.file(0), change(fs.readFileSync(first.file(0), 'utf8'), 'key-0'));
      expect(first.read(), what).toEqual([]);
      const second = keptSite(rounds);
      fs.writeFileSync(second.file(1), change(fs.readFileSync(second.file(1), 'utf8'), 'key-1'));
      expect(
        second.read().map((model) => model.key),
        `${what}, second round`,
      ).toEqual(['key-0']);
    }
    const { read, file } = keptSite(rounds);
    fs.rmSync(file(1));
    expect(read().map((model) => model.key)).toEqual(['key-0']);
  });
});
