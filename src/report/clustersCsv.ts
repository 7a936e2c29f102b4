/**
 * clusters.csv: the spatial review as one table with a `level` column: `barn` (global statistics
 * and detection per barn), `site` (the join count with permutations within barns), `cluster`
 * (linked positive pens), `pen` (local statistics), `spread` (each new positive's distance to the
 * nearest earlier one). Column names are stable and documented in the README.
 */
import { CsvColumns, type CsvCells } from './csvTable.js';
import type { RoundSpatial } from '../analysis/spatialRound.js';

export const CLUSTERS_COLUMNS = [
  'level',
  'site',
  'round',
  'assay',
  'barn',
  'pen',
  'cluster',
  'sampled',
  'positives',
  'bb',
  'expected_bb',
  'variance_bb',
  'z_bb',
  'p_join_count',
  'p_method',
  'moran_i',
  'moran_expected',
  'moran_z',
  'moran_p',
  'scan_pens',
  'scan_llr',
  'scan_p',
  'cluster_pens',
  'cluster_size',
  'mean_ct',
  'min_ct',
  'new_pens',
  'gi_star',
  'local_bb',
  'local_p',
  'positive',
  'ct',
  'nearest_earlier_pen',
  'nearest_earlier_distance',
  'spread_pattern',
  'detection_hypergeometric',
  'detection_spread_model',
  'detection_random_ropes',
  'seed',
  'measure',
  'mean_sp',
  'max_sp',
  'sp',
] as const;

type Cells = CsvCells;
const TABLE = new CsvColumns(CLUSTERS_COLUMNS);

const num = (value: number | null | undefined, digits = 6) =>
  value === null || value === undefined ? null : Number(value.toFixed(digits));

type AssaySpatial = RoundSpatial['assays'][number];
type BarnReport = AssaySpatial['report']['barns'][number];

/** The site row of an assay: the join count with positives permuted within barns. */
function siteRow(assay: AssaySpatial, base: Cells): Cells {
  const site = assay.report;
  return TABLE.over(base, {
    level: 'site',
    assay: assay.assayId,
    bb: site.joinCount?.bb ?? null,
    expected_bb: num(site.joinCount?.expectedBB),
    variance_bb: num(site.joinCount?.varianceBB),
    z_bb: num(site.joinCount?.zBB),
    p_join_count: num(site.joinCount?.pPermutation),
    p_method: site.joinCount?.inference.method ?? null,
    spread_pattern: site.spread.pattern,
    seed: site.seed,
    measure: assay.measure,
  });
}

/** The barn row: its global statistics (join count, Moran's I, scan) and the detection of the ropes hung. */
function barnRow(assay: AssaySpatial, barn: BarnReport, base: Cells): Cells {
  const detection = assay.detection.find((entry) => entry.barnId === barn.barn);
  return TABLE.over(base, {
    level: 'barn',
    assay: assay.assayId,
    barn: barn.barn,
    sampled: barn.n,
    positives: barn.positives,
    bb: barn.joinCount?.bb ?? null,
    expected_bb: num(barn.joinCount?.expectedBB),
    variance_bb: num(barn.joinCount?.varianceBB),
    z_bb: num(barn.joinCount?.zBB),
    p_join_count: num(barn.joinCount?.pPermutation),
    p_method: barn.joinCount?.inference.method ?? null,
    moran_i: num(barn.moran?.I),
    moran_expected: num(barn.moran?.expected),
    moran_z: num(barn.moran?.zRandomisation),
    moran_p: num(barn.moran?.pPermutation),
    scan_pens: barn.scan?.mostLikely?.pens.join(' ') ?? null,
    scan_llr: num(barn.scan?.mostLikely?.llr),
    scan_p: num(barn.scan?.mostLikely?.p),
    spread_pattern: barn.spread.pattern,
    detection_hypergeometric: num(detection?.hypergeometric),
    detection_spread_model: num(detection?.spreadModel),
    detection_random_ropes: num(detection?.randomRopes),
    seed: barn.seed,
    measure: assay.measure,
  });
}

/** The barn's rows below it: its clusters, its pens' local statistics, and each new positive's distance to the nearest earlier one. */
function barnDetailRows(assay: AssaySpatial, barn: BarnReport, base: Cells): Cells[] {
  const at = TABLE.over(base, { assay: assay.assayId, barn: barn.barn, measure: assay.measure });
  const clusters: Cells[] = barn.clusters.map((cluster) => {
    const sp = assay.clusterSp.find((entry) => entry.barnId === barn.barn && entry.cluster === cluster.index);
    return TABLE.over(at, {
      level: 'cluster',
      cluster: cluster.index,
      cluster_pens: cluster.pens.join(' '),
      cluster_size: cluster.size,
      mean_ct: num(cluster.meanCt, 2),
      min_ct: num(cluster.minCt, 2),
      new_pens: cluster.newPens.join(' '),
      mean_sp: num(sp?.meanSp),
      max_sp: num(sp?.maxSp),
    });
  });
  const pens: Cells[] = barn.pens.map((pen) =>
    TABLE.over(at, {
      level: 'pen',
      pen: pen.id,
      positive: pen.positive,
      ct: pen.ct,
      gi_star: num(pen.giStar),
      local_bb: pen.localBB,
      local_p: num(pen.localP),
      sp: assay.spByPen[`${barn.barn}/${pen.id}`] ?? null,
    }),
  );
  const spread: Cells[] = barn.spread.newPositives.map((fresh) =>
    TABLE.over(at, {
      level: 'spread',
      pen: fresh.id,
      nearest_earlier_pen: fresh.nearestEarlierPen,
      nearest_earlier_distance: num(fresh.nearestEarlierDistance, 3),
      spread_pattern: fresh.kind,
    }),
  );
  return [...clusters, ...pens, ...spread];
}

export function clustersCsv(spatial: RoundSpatial): string {
  const base = TABLE.cells({ site: spatial.site, round: spatial.round.number });
  const rows = spatial.assays.flatMap((assay) => [
    siteRow(assay, base),
    ...assay.report.barns.flatMap((barn) => [barnRow(assay, barn, base), ...barnDetailRows(assay, barn, base)]),
  ]);
  return TABLE.table(rows);
}
