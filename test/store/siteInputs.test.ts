/**
 * A site's analysis inputs are one plain value, loaded from one committed state, and the analysis
 * reads nothing else: with the store closed, the same inputs give the same analysis the outputs
 * were written from. The rows are a rope sheet and two lab reports of one rope (common practice,
 * no source: a later report of the same sample, assay and lab replaces the earlier one).
 */
import { describe, expect, it } from 'vitest';
import { analyseSite } from '../../src/analysis/analyseSite.js';
import { wordSiteAnalysis } from '../../src/report/siteWording.js';
import { OutbreakCache } from '../../src/analysis/spatialRound.js';
import { northfieldExport } from '../../src/demo/scenario.js';
import { regenerateSite } from '../../src/outputs.js';
import { clockDay } from '../../src/rounds/rounds.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();
const SITE = 'hollow-creek';

describe("a site's inputs", () => {
  it('are the same rows the single queries give, and analyse alike once the store is closed', async () => {
    const ws = workspace();
    await ws.drop(
      'hollow-creek_ropes.csv',
      'sample_id,site,barn,pen,hung_on\nFARM-1,hollow-creek,F1,A1,2026-08-03\nFARM-2,hollow-creek,F1,A2,2026-08-03\n',
    );
    const rope = { sampleId: 'FARM-1', assay: 'PRRSV' as const, collectedOn: '2026-08-03' };
    await ws.drop('nvdl_results_2026-08-06.csv', northfieldExport([{ ...rope, ct: null }], '2026-08-06', 1));
    await ws.drop('nvdl_results_2026-08-08.csv', northfieldExport([{ ...rope, ct: 31.2 }], '2026-08-08', 2));
    const open = ws.ws();
    const { store } = open;
    const inputs = store.siteInputs(SITE);
    expect(inputs).toEqual({
      version: store.siteVersion(SITE),
      ropes: store.ropes(SITE),
      results: store.currentResults(SITE),
      planned: store.plannedRopes(SITE),
      plannedWithoutResults: store.plannedWithoutResults(SITE),
      replaced: store.replacedReports(SITE),
      mistyped: store.mistypedRefusals(SITE),
    });
    // Three files touched the site; the later report is the one current, the earlier one replaced.
    expect(inputs.version).toBe(3);
    expect(inputs.results.map((result) => [result.sampleId, result.ct])).toEqual([['FARM-1', 31.2]]);
    expect(inputs.replaced).toHaveLength(1);

    const site = open.config.sites.find((candidate) => candidate.id === SITE)!;
    // The rebuild stores its plan as planned ropes, and a plan made again keeps their sample IDs:
    // the inputs read after it give the analysis it wrote.
    const written = regenerateSite(open, site, { full: true });
    const before = store.siteInputs(SITE);
    const context = { config: open.config, today: clockDay(open.now()) };
    ws.closeStore();
    const again = wordSiteAnalysis(
      analyseSite(site, before, { ...context, cache: new OutbreakCache(open.config.analysis) }),
    );
    expect(again).toEqual(written);
  });
});
