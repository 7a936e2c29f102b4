/**
 * The change log per site (SQLite migration 10, PostgreSQL migration 3): each committed file logs,
 * under the version it gave the site, the earliest day among the ropes it hung and the ropes whose
 * sample or pool it reported. The expected days are worked out here from the sheet's own rows.
 */
import { describe, expect, it } from 'vitest';
import { northfieldExport } from '../../src/demo/labFiles.js';
import type { PlannedRope } from '../../src/domain/records.js';
import type { SiteChangesSince } from '../../src/domain/store.js';
import { formatSampleId } from '../../src/plan/sampleId.js';
import { workspacesPerTest } from '../helpers/workspace.js';

const workspace = workspacesPerTest();

const SITE = 'hollow-creek';
const POOL = 'HCF01-901J';

/** The rope sheet: ropes on four days, the middle two tested in one pool. */
const SHEET = [
  { sampleId: 'FARM-1', pen: 'A1', hungOn: '2026-08-03', pool: '' },
  { sampleId: 'FARM-2', pen: 'A2', hungOn: '2026-08-10', pool: POOL },
  { sampleId: 'FARM-3', pen: 'A3', hungOn: '2026-08-17', pool: POOL },
  { sampleId: 'FARM-4', pen: 'A4', hungOn: '2026-08-24', pool: '' },
];

const sheetCsv = () =>
  `sample_id,site,barn,pen,hung_on,pool\n${SHEET.map((r) => `${r.sampleId},${SITE},F1,${r.pen},${r.hungOn},${r.pool}`).join('\n')}\n`;

/** The earliest day among the sheet's ropes that `reported` names, as a rope or as its pool. */
function earliestOf(reported: readonly string[]): string {
  const days = SHEET.filter((r) => reported.includes(r.sampleId) || reported.includes(r.pool)).map((r) => r.hungOn);
  expect(days.length).toBeGreaterThan(0);
  return days.sort()[0]!;
}

describe('the change log per site', () => {
  it('logs for each commit the earliest day of the ropes it hung or reported, by pool and by plan too', async () => {
    const ws = workspace();
    const store = ws.ws().store;
    const planned: PlannedRope = {
      sampleId: formatSampleId({ siteCode: 'HCF', round: 3, sequence: 11 }),
      siteId: SITE,
      barnId: 'F2',
      penId: 'A1',
      side: 'A',
      reason: 'routine',
      dueOn: '2026-08-31',
      plannedAt: '2026-08-20T00:00:00Z',
      afterRound: 0,
    };
    store.replacePlan(SITE, 0, [planned]);
    const result = (sampleId: string, collectedOn: string) => ({
      sampleId,
      assay: 'PRRSV' as const,
      ct: null,
      collectedOn,
    });

    await ws.drop('hollow-creek_ropes.csv', sheetCsv());
    const direct = ['FARM-3', 'FARM-4'];
    await ws.drop(
      'nvdl_results_2026-08-27.csv',
      northfieldExport(
        direct.map((id) => result(id, SHEET.find((r) => r.sampleId === id)!.hungOn)),
        '2026-08-27',
        1,
      ),
    );
    await ws.drop('nvdl_results_2026-08-28.csv', northfieldExport([result(POOL, '2026-08-24')], '2026-08-28', 3));
    // Collected before the plan's due day: the rope counts as hung on its collection date.
    const collected = '2026-08-29';
    await ws.drop(
      'nvdl_results_2026-09-01.csv',
      northfieldExport([result(planned.sampleId, collected)], '2026-09-01', 4),
    );

    const expected = [
      SHEET.map((r) => r.hungOn).sort()[0],
      earliestOf(direct),
      earliestOf([POOL]),
      collected < planned.dueOn ? collected : planned.dueOn,
    ];
    expect(expected).toEqual(['2026-08-03', '2026-08-17', '2026-08-10', '2026-08-29']);
    const version = store.siteVersion(SITE);
    const log = ws
      .sql()
      .all<{ version: number; from_day: string | null }>(
        'SELECT version, from_day FROM site_changes WHERE site_id = ? ORDER BY version',
        SITE,
      );
    expect(log).toEqual(expected.map((day, i) => ({ version: version - expected.length + 1 + i, from_day: day })));

    // The log as a build reads it: commits after a version and their earliest day.
    const since = (after: number): SiteChangesSince => {
      let seen: SiteChangesSince | undefined;
      store.siteInputsChosen(
        SITE,
        () => [],
        (_head, changesSince) => {
          seen = changesSince(after);
          return undefined;
        },
      );
      return seen!;
    };
    expect(since(version - 4)).toEqual({ commits: 4, fromDay: '2026-08-03' });
    expect(since(version - 2)).toEqual({ commits: 2, fromDay: '2026-08-10' });
    expect(since(version - 1)).toEqual({ commits: 1, fromDay: '2026-08-29' });
    expect(since(version)).toEqual({ commits: 0, fromDay: null });
  });
});
