/**
 * The veterinarian's herd status on every page of a site and in summary.csv, beside what the
 * round's numbers say. Expected numbers are by hand from the rows of test/alerts/scenario.ts
 * (PRRSV: Ct 28.4 positive, empty Ct negative, 37.1 suspect with the demo cutoffs 36/40).
 */
import fs from 'node:fs';
import path from 'node:path';
import { parse } from 'csv-parse/sync';
import { describe, expect, it } from 'vitest';
import { workspacesPerTest } from '../helpers/workspace.js';
import { dropRound, withSite } from '../alerts/scenario.js';

const workspace = workspacesPerTest();
const ROUND = 'r01-2026-08-03';
const pages = (outbox: string) => [
  path.join(outbox, 'hollow-creek', ROUND, 'summary.html'),
  path.join(outbox, 'hollow-creek', ROUND, 'clusters.html'),
  path.join(outbox, 'hollow-creek', 'next-round.html'),
];

describe('herd status', () => {
  it('is shown on every page of the site with the day it was set and what the numbers say', async () => {
    const ws = workspace(
      withSite(
        (site) =>
          (site.herdStatus = {
            category: 'provisionally negative',
            setOn: '2026-07-30',
            note: 'Two clean rounds <before>.',
          }),
      ),
    );
    await dropRound(ws);
    for (const page of pages(ws.paths.outbox)) {
      const html = fs.readFileSync(page, 'utf8');
      const block = /<section class="explain" data-herd-status="provisionally negative">.*?<\/section>/.exec(html)?.[0];
      expect(block, page).toBeDefined();
      expect(block).toContain(
        '<span data-herd-category="">provisionally negative</span>, set on 2026-07-30 (before this round).',
      );
      // The note is text from the configuration: escaped (HTML Living Standard, 13.1.2.6 text).
      expect(block).toContain('Two clean rounds &lt;before&gt;.');
      // By hand: 3 PRRSV ropes tested in F1, 1 positive; the round's positive resets freedom to 0.
      expect(block).toMatch(
        /PRRSV[^:]*: 1 positive of 3 tested ropes \(barn F1\); detection confidence [\d.]+%, positive since round 1\./,
      );
      // Shown under the heading, before the page's body.
      expect(html.indexOf('data-herd-status')).toBeLessThan(html.indexOf('<main>'));
    }
  });

  it('fills the herd-status columns of the site rows of summary.csv only', async () => {
    const ws = workspace(withSite((site) => (site.herdStatus = { category: 'positive stable', setOn: '2026-08-10' })));
    await dropRound(ws);
    const rows = parse(fs.readFileSync(path.join(ws.paths.outbox, 'hollow-creek', ROUND, 'summary.csv'), 'utf8'), {
      columns: true,
    }) as Record<string, string>[];
    const site = rows.filter((row) => row.level === 'site');
    expect(site.length).toBeGreaterThan(0);
    for (const row of site)
      expect(row).toMatchObject({
        herd_status: 'positive stable',
        herd_status_set_on: '2026-08-10',
        herd_status_note: '',
      });
    // Beside the numbers on the same row: PRRSV positive 1 of 3 tested (by hand).
    expect(site.find((row) => row.assay === 'PRRSV')).toMatchObject({ positive: '1', tested: '3' });
    for (const row of rows.filter((entry) => entry.level !== 'site')) expect(row.herd_status).toBe('');
  });

  it('adds nothing to pages or rows of a site without one', async () => {
    const ws = workspace();
    await dropRound(ws);
    for (const page of pages(ws.paths.outbox)) expect(fs.readFileSync(page, 'utf8')).not.toContain('data-herd-status');
    const rows = parse(fs.readFileSync(path.join(ws.paths.outbox, 'hollow-creek', ROUND, 'summary.csv'), 'utf8'), {
      columns: true,
    }) as Record<string, string>[];
    expect(rows.every((row) => row.herd_status === '')).toBe(true);
  });
});
