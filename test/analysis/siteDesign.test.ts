import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { siteConfidence } from '../../src/analysis/confidence.js';
import { planNextRound } from '../../src/analysis/nextRound.js';
import { wordPlan } from '../../src/report/planWording.js';
import { summariseSite } from '../../src/analysis/roundSummary.js';
import { wordSummary } from '../../src/report/summaryNotices.js';
import { OutbreakCache } from '../../src/analysis/spatialRound.js';
import { ConfigError, loadConfig } from '../../src/config/load.js';
import type { Config } from '../../src/config/types.js';
import { DEMO_CONFIG_DIR } from '../../src/demo/runDemo.js';
import { buildSiteRounds } from '../../src/rounds/roundModel.js';
import { renderSummaryPage } from '../../src/report/html/summaryPage.js';
import { SUMMARY_COLUMNS, summaryCsv } from '../../src/report/summaryCsv.js';
import { detectionFor } from '../../src/stats/detection.js';
import { expectClose } from '../helpers/expectClose.js';
import { planFromRounds } from '../helpers/planFromRounds.js';
import { roundRopes } from './fixtures.js';

/** One site of three barns of 2 x 18 = 36 pens each. */
function threeBarnConfig(program: Record<string, unknown> = {}): Config {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-site-design-'));
  fs.mkdirSync(path.join(dir, 'labs'));
  for (const name of ['assays.yaml', 'labs/northfield.yaml'])
    fs.copyFileSync(path.join(DEMO_CONFIG_DIR, name), path.join(dir, name));
  const sites = {
    analysis: { seed: 3 },
    programDefaults: {
      designPrevalence: { pens: 1 },
      targetConfidence: 0.95,
      ropeSensitivity: { default: 1, 'PRRSV-AB': 1 },
      ropeSpecificity: 1,
      roundWindowDays: 3,
      intervalDays: 14,
      priorFreedom: 0.5,
      introductionPerInterval: 0.01,
      ...program,
    },
    sites: [
      {
        id: 'test-site',
        name: 'Test Site',
        code: 'TST',
        barns: ['B1', 'B2', 'B3'].map((id) => ({ id, layout: { rows: 2, pensPerRow: 18 } })),
      },
    ],
  };
  fs.writeFileSync(path.join(dir, 'sites.yaml'), JSON.stringify(sites));
  return loadConfig(dir);
}

/** Ropes per barn on its first n pens, all negative. */
function ropesIn(counts: Record<string, number>) {
  const all = Object.entries(counts).map(([barnId, n], b) => {
    const { ropes, results } = roundRopes('2026-08-03', n, `R${barnId}`);
    return {
      ropes: ropes.map((rope) => ({ ...rope, barnId })),
      results: results.map((result) => ({ ...result, id: result.id + 100 * b })),
    };
  });
  return { ropes: all.flatMap((entry) => entry.ropes), results: all.flatMap((entry) => entry.results) };
}

function firstRound(config: Config, counts: Record<string, number>) {
  const site = config.sites[0]!;
  const { ropes, results } = ropesIn(counts);
  const rounds = buildSiteRounds(site, ropes, results);
  const confidence = siteConfidence(site, rounds);
  return { site, rounds, confidence, siteEntry: confidence[0]!.sites.find((entry) => entry.assayId === 'PRRSV')! };
}

describe('site detection when not every barn is infected (two-stage design)', () => {
  // d = 1 pen of 36, Se = 1: n ropes detect n / 36 (Cameron & Baldock 1998, by hand).
  // B1: 18 ropes, p = 0.5; B2: 9 ropes, p = 0.25; B3: none, p = 0 (counts as an unsampled barn).
  const counts = { B1: 18, B2: 9 };

  it('gives every-barn and one-barn figures; with one barn infected the site figure is the mean of the barns (epiR rsu.sep.rsvarse special case)', () => {
    const { siteEntry } = firstRound(threeBarnConfig(), counts);
    expect(siteEntry).toMatchObject({ barns: 3, infectedBarns: 3, fewInfectedBarns: 1 });
    // 1 - (1 - 0.5)(1 - 0.25)(1 - 0) = 0.625 (Martin, Cameron & Greiner 2007, all barns; by hand).
    expectClose(siteEntry.detectionIfEveryBarn, 0.625, { rel: 1e-12 }, 'every barn');
    // D = 1: the mean (0.5 + 0.25 + 0) / 3 = 0.25 (by hand).
    expectClose(siteEntry.detectionIfFewBarns, 0.25, { rel: 1e-12 }, 'one barn');
    // Without barnDesignPrevalence freedom rests on the every-barn figure, as before.
    expectClose(siteEntry.detectionConfidence, 0.625, { rel: 1e-12 }, 'freedom figure');
  });

  it('builds freedom on the barn-level design value when one is set: hand enumeration of the three pairs for D = 2', () => {
    for (const barnDesignPrevalence of [{ barns: 2 }, 0.5]) {
      // 0.5 of 3 barns rounds up to 2 barns.
      const { siteEntry } = firstRound(threeBarnConfig({ barnDesignPrevalence }), counts);
      expect(siteEntry).toMatchObject({ infectedBarns: 2, fewInfectedBarns: 2 });
      // By hand over the C(3, 2) = 3 equally likely pairs: misses 0.5*0.75 + 0.5*1 + 0.75*1 = 1.625; 1 - 1.625/3.
      expectClose(
        siteEntry.detectionConfidence,
        1 - 1.625 / 3,
        { rel: 1e-12 },
        `D = 2 from ${JSON.stringify(barnDesignPrevalence)}`,
      );
      // Freedom after a negative round with prior 0.5: 0.5 / (1 - 0.5 SSe) (Martin, Cameron & Greiner 2007).
      const sse = 1 - 1.625 / 3;
      expectClose(siteEntry.freedom ?? Number.NaN, 0.5 / (1 - 0.5 * sse), { rel: 1e-12 }, 'posterior freedom');
    }
  });

  it('gives 1 - (1 - p)^D for D of k alike barns (epiR rsu.sep.rs2st with equal herd sensitivities)', () => {
    // Every barn 18 ropes: p = 0.5; D = 2: 1 - 0.5^2 = 0.75 (by hand).
    const { siteEntry } = firstRound(threeBarnConfig({ barnDesignPrevalence: { barns: 2 } }), {
      B1: 18,
      B2: 18,
      B3: 18,
    });
    expectClose(siteEntry.detectionConfidence, 0.75, { rel: 1e-12 }, '1 - (1 - 0.5)^2');
    expectClose(siteEntry.detectionIfEveryBarn, 0.875, { rel: 1e-12 }, '1 - 0.5^3');
  });

  it('labels both site figures in plain words in the summary, and writes them to summary.csv', () => {
    const config = threeBarnConfig({ designPrevalence: 0.1 });
    const { site, rounds, confidence } = firstRound(config, counts);
    const [summary] = summariseSite(config, site, rounds, confidence).map(wordSummary);
    const figures = summary!.assays.find((assay) => assay.id === 'PRRSV')!.siteFigures;
    expect(figures.map((figure) => figure.label)).toEqual([
      'if every barn were infected at 10% of pens',
      'if only one barn were infected',
    ]);
    expect(figures.map((figure) => figure.freedom)).toEqual([true, false]);
    // The page shows both, each with its label; the one freedom is built on is marked.
    const html = renderSummaryPage({ summary: summary!, alerts: [], notices: [] });
    const row = html.slice(html.indexOf('<tr data-assay="PRRSV" data-measure="ct">'));
    expect(row).toMatch(
      /<span data-site-figure="3" data-freedom=""><strong>\d+\.\d%<\/strong> if every barn were infected at 10% of pens \(freedom is built on this\)<\/span>/,
    );
    expect(row).toMatch(/<span data-site-figure="1">\d+\.\d% if only one barn were infected<\/span>/);
    const csv = summaryCsv(summary!).split('\n');
    const header = csv[0]!.split(',');
    const at = header.indexOf('site_barns');
    expect(header.slice(at, at + 4)).toEqual([
      'site_barns',
      'infected_barns',
      'detection_if_every_barn',
      'detection_if_infected_barns',
    ]);
    expect(SUMMARY_COLUMNS).toContain('detection_if_infected_barns');
    const siteRow = csv.find((line) => line.startsWith('site,') && line.includes(',PRRSV,'))!.split(',');
    expect(siteRow[at]).toBe('3');
    expect(siteRow[at + 1]).toBe('1');
  });

  it('names the key when more barns are set than the site has', () => {
    expect(() => threeBarnConfig({ barnDesignPrevalence: { barns: 4 } })).toThrow(ConfigError);
    expect(() => threeBarnConfig({ barnDesignPrevalence: { barns: 4 } })).toThrow(
      /programDefaults\.barnDesignPrevalence\.barns.*4 infected barns.*3 barns/,
    );
  });
});

describe('site-level sizing with a barn-level design value', () => {
  it('sizes each barn to 1 - (1 - C)^(1/D), and the planned two-stage site figure reaches C', () => {
    const config = threeBarnConfig({
      designPrevalence: 0.1,
      ropeSensitivity: { default: 0.9, 'PRRSV-AB': 0.9 },
      sizeFor: 'site',
      barnDesignPrevalence: { barns: 1 },
    });
    const site = config.sites[0]!;
    const { ropes, results } = ropesIn({ B1: 10, B2: 10, B3: 10 });
    const rounds = buildSiteRounds(site, ropes, results);
    const { plan, confidence, spatial } = planFromRounds(config, site, rounds, { today: '2026-08-10' });
    expect(plan.sizing).toMatchObject({ sizeFor: 'site', infectedBarns: 1, sizingModel: 'hypergeometric' });
    // D = 1: each barn must reach C itself, 1 - (1 - 0.95)^(1/1) = 0.95 (Martin, Cameron & Greiner 2007 inverted, D = 1).
    // Cameron & Baldock 1998: N = 36, d = 4, Se = 0.9.
    const detect = detectionFor({ pens: 36, infected: 4, sensitivity: 0.9 });
    for (const barn of plan.barns) {
      expect(detect(barn.sizing.routineRopes)).toBeGreaterThanOrEqual(0.95);
      expect(detect(barn.sizing.routineRopes - 1)).toBeLessThan(0.95);
    }
    // Alike barns: the two-stage figure with D = 1 is the barn figure (mean of equal values).
    expectClose(
      plan.siteDetectionIfNegative,
      detect(plan.barns[0]!.sizing.routineRopes),
      { rel: 1e-12 },
      'D = 1, alike barns',
    );
    expect(plan.sizing.ifNegative).toMatch(
      /the site has \d+\.\d% detection confidence if only one barn were infected \(target 95\.0% for the site, hypergeometric model\)/,
    );
    // Sizing as if every barn were infected (k = 3) would ask each barn for only 1 - 0.05^(1/3) = 0.6316 (by hand): fewer ropes.
    const everyBarn = threeBarnConfig({
      designPrevalence: 0.1,
      ropeSensitivity: { default: 0.9, 'PRRSV-AB': 0.9 },
      sizeFor: 'site',
    });
    const planAll = wordPlan(
      planNextRound({
        site: everyBarn.sites[0]!,
        rounds,
        confidence,
        spatial,
        settings: everyBarn.analysis,
        cache: new OutbreakCache(everyBarn.analysis),
        today: '2026-08-10',
      }),
    );
    expect(planAll.sizing.infectedBarns).toBe(3);
    expect(detect(planAll.barns[0]!.sizing.routineRopes)).toBeGreaterThanOrEqual(0.631597);
    expect(planAll.barns[0]!.sizing.routineRopes).toBeLessThan(plan.barns[0]!.sizing.routineRopes);
  });
});
