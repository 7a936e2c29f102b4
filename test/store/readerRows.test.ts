/**
 * The reader's hottest queries (`currentResults`, `ropes`) take their rows as arrays and build
 * the objects themselves, with reason texts looked up by id. Checked against the straightforward
 * reading they replaced (better-sqlite3 row objects named by SQL aliases, joined to `reasons`),
 * kept here as the reference, on seeded random stores: two sites, ropes with and without pools,
 * planned ropes (some pooled, some with results), Ct and S/P results with NULLs in every nullable
 * column, reissues linked in `supersessions`, and results of samples no site knows. Both the
 * values and the order of the keys must agree (the JSON outputs are written in key order).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import type Database from 'better-sqlite3';
import { afterEach, describe, expect, it } from 'vitest';
import type { StoredResult, StoredRope } from '../../src/domain/records.js';
import { Store } from '../../src/store/store.js';
import { randomInt, seededRng, type Rng } from '../../src/util/random.js';
import { wideResultInserter } from '../helpers/wideResults.js';

const dirs: string[] = [];
afterEach(() => {
  for (const dir of dirs.splice(0)) fs.rmSync(dir, { recursive: true, force: true });
});

const SITES = ['north-ridge', 'south-fork'];
const pick = <T>(rng: Rng, items: readonly T[]): T => items[randomInt(rng, items.length)]!;
const maybe = <T>(rng: Rng, value: T): T | null => (rng() < 0.3 ? null : value);
const day = (rng: Rng) =>
  `2026-${String(1 + randomInt(rng, 12)).padStart(2, '0')}-${String(1 + randomInt(rng, 28)).padStart(2, '0')}`;

/** Fills an empty store with random rows of every kind the two queries read. */
function fillRandomStore(db: Database.Database, rng: Rng): void {
  db.exec(`INSERT INTO files (id, name, sha256, kind, lab_id, received_at, status, byte_length) VALUES
    (1, 'sheet.csv', 'a1', 'ropes', NULL, '2026-01-01T00:00:00Z', 'accepted', 1),
    (2, 'lab-a.csv', 'a2', 'results', 'lab-a', '2026-01-02T00:00:00Z', 'accepted', 1),
    (3, 'lab-b.csv', 'a3', 'results', 'lab-b', '2026-01-03T00:00:00Z', 'accepted', 1)`);
  const reasons = [
    'Undetermined is not detected',
    "Ct 31.2 below the lab's cutoff 36",
    'S/P 0.62 at or above 0.4',
    'control failed: IPC',
    'Ct 36.5 — suspect band',
  ];
  reasons.forEach((text, index) => db.prepare('INSERT INTO reasons (id, text) VALUES (?, ?)').run(index + 1, text));
  const samples = [
    ...Array.from({ length: 160 }, (_, i) => `S${String(i).padStart(3, '0')}`),
    ...Array.from({ length: 12 }, (_, i) => `POOL-${i}`),
    ...Array.from({ length: 20 }, (_, i) => `PLAN-${i}`),
    ...Array.from({ length: 10 }, (_, i) => `STRAY-${i}`),
  ];
  const sampleNumber = new Map(samples.map((id, index) => [id, index + 1]));
  const insertSample = db.prepare('INSERT INTO samples (id, sample_id) VALUES (?, ?)');
  for (const [id, number] of sampleNumber) insertSample.run(number, id);
  const insertRope = db.prepare(
    'INSERT INTO ropes (sample, site_id, barn_id, pen_id, hung_on, source, file_id, line, pool) VALUES (?, ?, ?, ?, ?, ?, 1, ?, ?)',
  );
  for (let i = 0; i < 150; i++) {
    const pool = rng() < 0.2 ? sampleNumber.get(`POOL-${randomInt(rng, 8)}`)! : null;
    insertRope.run(
      i + 1,
      pick(rng, SITES),
      pick(rng, ['B1', 'B2']),
      `P${i}`,
      day(rng),
      pick(rng, ['sheet', 'sample-pattern']),
      i + 2,
      pool,
    );
  }
  const insertPlanned = db.prepare(
    `INSERT INTO planned_ropes (sample_id, site_id, barn_id, pen_id, side, reason, due_on, planned_at, after_round, pool_id)
     VALUES (?, ?, ?, ?, 'A', 'routine', ?, '2026-01-01T00:00:00Z', 3, ?)`,
  );
  for (let i = 0; i < 20; i++) {
    const pool = rng() < 0.3 ? pick(rng, ['POOL-8', 'POOL-9', 'POOL-10', 'POOL-11', 'POOL-0']) : null;
    insertPlanned.run(`PLAN-${i}`, pick(rng, SITES), 'B1', `Q${i}`, day(rng), pool);
  }
  const insertResult = wideResultInserter(db);
  const resultCount = 420;
  for (let id = 1; id <= resultCount; id++) {
    const sp = rng() < 0.25;
    const ct = sp || rng() < 0.5 ? null : Math.round((15 + rng() * 25) * 10) / 10;
    const value = sp ? Math.round(rng() * 300) / 100 : null;
    const lab = pick(rng, ['lab-a', 'lab-b']);
    insertResult({
      id,
      file_id: lab === 'lab-a' ? 2 : 3,
      line: id,
      sample: sampleNumber.get(pick(rng, samples))!,
      lab_id: lab,
      ...((assay) => ({ assay_id: assay, lab_assay: assay }))(sp ? 'PRRSV-AB' : pick(rng, ['PRRSV', 'IAV'])),
      ct,
      ct_raw: sp ? String(value) : ct === null ? pick(rng, ['Undetermined', '', 'N/A']) : String(ct),
      lab_call: maybe(rng, pick(rng, ['Positive', 'Negative', 'Détecté'])),
      accession: maybe(rng, `NV-${randomInt(rng, 10_000)}`),
      collected_on: maybe(rng, day(rng)),
      reported_on: maybe(rng, day(rng)),
      class: pick(rng, ['positive', 'suspect', 'negative', 'invalid']),
      reason: 1 + randomInt(rng, reasons.length),
      load_band: maybe(rng, pick(rng, ['high', 'low'])),
      positive_below: sp ? 0 : pick(rng, [35, 36, 37.5]),
      suspect_below: sp ? 0 : pick(rng, [38, 40]),
      cycle_limit: sp ? 0 : pick(rng, [40, 45]),
      call_differs: rng() < 0.1 ? 1 : 0,
      content_key: id,
      sp: value,
      positive_at_or_above: sp ? pick(rng, [0.4, 0.5]) : null,
      suspect_at_or_above: sp ? maybe(rng, 0.3) : null,
      measure: sp ? 'sp-ratio' : 'ct',
    });
  }
  const insertLink = db.prepare(
    "INSERT OR IGNORE INTO supersessions (old_result_id, new_result_id, reason, kind) VALUES (?, ?, 'later report', 'later-report')",
  );
  for (let i = 0; i < 60; i++) insertLink.run(1 + randomInt(rng, resultCount), 1 + randomInt(rng, resultCount));
}

/** currentResults as first written: row objects named by SQL aliases, the reason joined in. */
function referenceResults(db: Database.Database, siteId?: string): StoredResult[] {
  const ofSite =
    siteId === undefined
      ? ''
      : `AND r.sample IN (SELECT sample FROM ropes WHERE site_id = @siteId
           UNION SELECT pool FROM ropes WHERE site_id = @siteId AND pool IS NOT NULL
           UNION SELECT s.id FROM planned_ropes p JOIN samples s ON s.sample_id = p.sample_id OR s.sample_id = p.pool_id WHERE p.site_id = @siteId)`;
  return db
    .prepare(
      `SELECT r.id, r.file_id AS fileId, r.lab_id AS labId, s.sample_id AS sampleId, r.assay_id AS assayId, r.measure, r.ct, r.sp, r.ct_raw AS ctRaw, r.lab_call AS labCall,
              r.accession, r.collected_on AS collectedOn, r.reported_on AS reportedOn, r.class AS resultClass, x.text AS reason, r.load_band AS loadBand,
              CASE WHEN r.measure = 'ct' THEN r.positive_below END AS positiveBelow, CASE WHEN r.measure = 'ct' THEN r.suspect_below END AS suspectBelow,
              CASE WHEN r.measure = 'ct' THEN r.cycle_limit END AS cycleLimit, r.positive_at_or_above AS positiveAtOrAbove, r.suspect_at_or_above AS suspectAtOrAbove,
              r.call_differs AS callDiffers
       FROM results_read r JOIN samples s ON s.id = r.sample JOIN reasons x ON x.id = r.reason
       WHERE NOT EXISTS (SELECT 1 FROM supersessions o WHERE o.old_result_id = r.id) ${ofSite}
       ORDER BY r.id`,
    )
    .all(siteId === undefined ? {} : { siteId })
    .map((row) => ({ ...(row as StoredResult), callDiffers: Boolean((row as { callDiffers: number }).callDiffers) }));
}

/** The hung ropes as first read: row objects named by SQL aliases. */
function referenceHungRopes(db: Database.Database, siteId?: string): StoredRope[] {
  const where = siteId === undefined ? '' : 'WHERE h.site_id = @siteId';
  return db
    .prepare(
      `SELECT s.sample_id AS sampleId, h.site_id AS siteId, h.barn_id AS barnId, h.pen_id AS penId, h.hung_on AS hungOn, h.source, ps.sample_id AS poolId
       FROM ropes h JOIN samples s ON s.id = h.sample LEFT JOIN samples ps ON ps.id = h.pool ${where} ORDER BY h.hung_on, h.site_id, h.barn_id, h.pen_id`,
    )
    .all({ siteId }) as StoredRope[];
}

describe('the reader builds its rows as the straightforward reading does', () => {
  it.each([1, 2, 3, 4, 5])(
    'on random store %i: current results and ropes, per site and for the whole store',
    (seed) => {
      const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-reader-rows-'));
      dirs.push(dir);
      const store = new Store(path.join(dir, 'store.db'));
      try {
        fillRandomStore(store.db, seededRng(seed));
        for (const siteId of [...SITES, 'no-such-site', undefined]) {
          const results = store.currentResults(siteId);
          const expected = referenceResults(store.db, siteId);
          expect(results, `results of ${siteId ?? 'the store'}`).toStrictEqual(expected);
          expect(JSON.stringify(results)).toBe(JSON.stringify(expected));
          const hung = store.ropes(siteId).filter((rope) => rope.source !== 'plan');
          const expectedHung = referenceHungRopes(store.db, siteId);
          expect(hung, `ropes of ${siteId ?? 'the store'}`).toStrictEqual(expectedHung);
          expect(JSON.stringify(hung)).toBe(JSON.stringify(expectedHung));
        }
        // The random store holds what the check is about: pools, reissues, S/P rows, NULLs.
        const all = store.currentResults();
        expect(all.some((result) => result.measure === 'sp-ratio')).toBe(true);
        expect(all.some((result) => result.reportedOn === null && result.callDiffers)).toBe(true);
        expect(store.ropes().some((rope) => rope.poolId !== null && rope.source !== 'plan')).toBe(true);
        expect(all.length).toBeLessThan(420);
      } finally {
        store.close();
      }
    },
  );
});
