/**
 * The demo scenario: an invented cooperative with two sites, two invented labs with different
 * export layouts, and an infection that starts in one pen and spreads to its neighbours over
 * rounds. The ground truth (which pens are infected when) is fixed here; what the ropes find is
 * drawn from it with a seeded generator, so the demo is the same on every run.
 *
 * Only invented data lives here; no test uses it as a reference value.
 */
import { addDays, format, parseISO } from 'date-fns';
import type { Barn, Config, Site } from '../config/types.js';
import { inUsePens } from '../domain/layout.js';
import { formatSampleId, isWriteFriendlyCheck } from '../plan/sampleId.js';
import { deriveSeed, seededRng, type Rng } from '../util/random.js';
import { DEFAULT_PATHS, INBOX_FOLDERS } from '../workspacePaths.js';
import { measure, measureSp } from './groundTruth.js';
import { brackenridgeMessage } from './hl7Results.js';
import {
  csvCell,
  northfieldExport,
  northfieldWorkbook,
  ostermarkExport,
  ropeSheet,
  type ElisaRow,
  type LabRow,
  type RopeChoice,
} from './labFiles.js';
import { isEmptyOn } from '../rounds/pigGroups.js';

export {
  NORTHFIELD_HEADER,
  northfieldExport,
  northfieldWorkbook,
  ostermarkExport,
  ropeSheet,
  type RopeChoice,
} from './labFiles.js';

export const DEMO_SEED = 20260803;

export interface DemoDrop {
  /** When the file lands in the inbox (the demo's clock). */
  at: string;
  name: string;
  bytes: Buffer;
  /** What this drop shows a newcomer. */
  note: string;
}

/** Rounds of each site: the day the ropes go up (F3 and N2 a day later than the rest). */
export const HOLLOW_CREEK_ROUNDS = [
  '2026-08-03',
  '2026-08-17',
  '2026-08-31',
  '2026-09-14',
  '2026-09-28',
  '2026-10-12',
  '2026-10-26',
];
/** Tamsin Ridge skips its October round: the gap shows what a missed round costs. */
export const TAMSIN_RIDGE_ROUNDS = ['2026-08-05', '2026-08-26', '2026-09-16', '2026-10-28'];
/** The demo's "today": after the last results, before the next round is due. */
export const DEMO_TODAY = '2026-10-31T08:00:00.000Z';

/** The farm's own rope list: every third pen in use, alternating sides, moving one pen each round. */
export function farmRopes(barn: Barn, roundIndex: number, every: number, label: (n: number) => string): RopeChoice[] {
  const inUse = inUsePens(barn.pens);
  const byPosition = [...inUse].sort((a, b) => a.position - b.position || a.row - b.row);
  // Sorted by position then row, every third index falls on alternating sides of a two-row barn.
  const chosen = byPosition.filter((_, index) => (index + roundIndex) % every === 0);
  return chosen.map((pen, index) => ({ sampleId: label(index + 1), barnId: barn.id, penId: pen.id }));
}

const at = (date: string, hour: number) => `${date}T${String(hour).padStart(2, '0')}:00:00.000Z`;
const plus = (date: string, days: number) => format(addDays(parseISO(date), days), 'yyyy-MM-dd');

/** Hollow Creek rounds (0-based) whose ropes also go to the PRRSV antibody ELISA: about every four weeks. */
export const HOLLOW_CREEK_ELISA_ROUNDS: readonly number[] = [1, 3, 5];
/**
 * The ELISA rows of one Hollow Creek round, drawn from the ground truth with a generator of its
 * own (the PCR draws stay as they are). Round 2 carries the two cases a newcomer should see: an
 * S/P of 0.21 the lab calls negative (below the 0.4 cutoff: negative, never a "Ct of 0.21"), and
 * one antibody-positive rope in F3 with no virus anywhere (exposure: the PCR freedom is not reset).
 */
function elisaRows(ropes: readonly (RopeChoice & { hungOn: string })[], roundIndex: number): ElisaRow[] {
  const rng = seededRng(deriveSeed(DEMO_SEED, 'hollow-creek-elisa', roundIndex));
  const rows = ropes.map(
    (rope): ElisaRow => ({
      sampleId: rope.sampleId,
      assay: 'PRRSV-AB',
      sp: measureSp(rng, rope.barnId, rope.penId, roundIndex),
      collectedOn: rope.hungOn,
    }),
  );
  if (roundIndex === 1) {
    const f2 = ropes.findIndex((rope) => rope.barnId === 'F2');
    const f3 = ropes.map((rope, index) => ({ rope, index })).filter((entry) => entry.rope.barnId === 'F3');
    if (f2 >= 0) rows[f2]!.sp = 0.21;
    const stray = f3[Math.floor(f3.length / 3)];
    if (stray) rows[stray.index]!.sp = 0.52;
  }
  return rows;
}

type HungRope = RopeChoice & { hungOn: string };

/**
 * The ropes hung in each barn: the plan's tubes when there is a plan, else the farm's own choice
 * and labels. Round 6: the F3 crew wrote their own labels (and sent the sheet late).
 */
function hollowCreekRopes(site: Site, date: string, roundIndex: number, planned: readonly RopeChoice[]): HungRope[] {
  const mmdd = date.slice(5).replace('-', '');
  const hung: HungRope[] = [];
  for (const barn of site.barns) {
    const hungOn = barn.id === 'F3' ? plus(date, 1) : date;
    const usePlan = planned.length > 0 && !(roundIndex === 5 && barn.id === 'F3');
    const choice = usePlan
      ? planned.filter((rope) => rope.barnId === barn.id)
      : farmRopes(barn, roundIndex, 3, (n) => `HC-${mmdd}-${barn.id}-${String(n).padStart(2, '0')}`);
    for (const rope of choice) hung.push({ ...rope, hungOn });
  }
  return hung;
}

/**
 * What the lab measures on the ropes that came back, PRRSV and IAV, from the ground truth. Round
 * 4: one stray suspect in F3, never seen again (a high Ct in a dirty matrix). Round 5: the first
 * F1 positive comes back as an internal-control failure, then is reissued (`reissue`).
 */
function hollowCreekPcr(
  rng: Rng,
  hung: readonly HungRope[],
  lost: HungRope | undefined,
  roundIndex: number,
): { prrsv: LabRow[]; iav: LabRow[]; reissue: LabRow | undefined } {
  const prrsv: LabRow[] = [];
  const iav: LabRow[] = [];
  for (const rope of hung) {
    if (rope === lost) continue;
    let ct = measure(rng, rope.barnId, rope.penId, roundIndex);
    if (
      roundIndex === 3 &&
      rope.barnId === 'F3' &&
      ct === null &&
      !prrsv.some((row) => row.ct !== null && row.sampleId.includes('F3'))
    ) {
      const f3 = hung.filter((candidate) => candidate.barnId === 'F3');
      if (rope === f3[Math.floor(f3.length / 2)]) ct = 36.8;
    }
    prrsv.push({ sampleId: rope.sampleId, assay: 'PRRSV', ct, collectedOn: rope.hungOn });
    iav.push({ sampleId: rope.sampleId, assay: 'IAV', ct: null, collectedOn: rope.hungOn });
  }
  let reissue: LabRow | undefined;
  if (roundIndex === 4) {
    const target = prrsv.find(
      (row) => row.ct !== null && hung.find((rope) => rope.sampleId === row.sampleId)?.barnId === 'F1',
    );
    if (target) {
      reissue = { ...target, status: 'Corrected' };
      target.ct = null;
      target.controlFailed = true;
    }
  }
  return { prrsv, iav, reissue };
}

/**
 * The PCR result files of a round: the last round as the lab's Excel workbook, even rounds as
 * one export, odd rounds as two files the same day.
 */
async function hollowCreekResults(
  prrsv: readonly LabRow[],
  iav: readonly LabRow[],
  reported: string,
  roundIndex: number,
): Promise<DemoDrop[]> {
  if (roundIndex === HOLLOW_CREEK_ROUNDS.length - 1) {
    return [
      {
        at: at(reported, 14),
        name: `nvdl_results_${reported}.xlsx`,
        bytes: await northfieldWorkbook([...prrsv, ...iav], reported, 1000 + roundIndex * 100, at(reported, 13)),
        note: 'PRRSV and influenza results as an Excel workbook: sheet "Results", header on row 3',
      },
    ];
  }
  if (roundIndex % 2 === 0) {
    return [
      {
        at: at(reported, 14),
        name: `nvdl_results_${reported}.csv`,
        bytes: northfieldExport([...prrsv, ...iav], reported, 1000 + roundIndex * 100),
        note: 'PRRSV and influenza results in one export',
      },
    ];
  }
  return [
    {
      at: at(reported, 11),
      name: `nvdl_prrsv_${reported}.csv`,
      bytes: northfieldExport(prrsv, reported, 1000 + roundIndex * 100),
      note: 'PRRSV results',
    },
    // Round 2's influenza PCR went to a second lab, which reports by HL7 v2 (an ORU^R01 message).
    roundIndex === 1
      ? {
          at: at(reported, 15),
          name: `brahl_influenza_${reported}.hl7`,
          bytes: brackenridgeMessage(iav, {
            controlId: `BRAHL-${reported.replace(/-/g, '')}-001`,
            reportedOn: reported,
            at: at(reported, 15),
            firstCase: 410,
          }),
          note: 'influenza results from a second lab as an HL7 v2 ORU^R01 message',
        }
      : {
          at: at(reported, 15),
          name: `nvdl_influenza_${reported}.csv`,
          bytes: northfieldExport(iav, reported, 1050 + roundIndex * 100),
          note: 'influenza results, a second file the same day',
        },
  ];
}

/**
 * The files of one Hollow Creek round. `planned` are the ropes ropewatch planned for this round
 * (empty before the first plan): when present the farm hangs those tubes and sends no sheet.
 */
export async function hollowCreekRound(
  config: Config,
  roundIndex: number,
  planned: readonly RopeChoice[],
): Promise<DemoDrop[]> {
  const site = config.siteById.get('HOLLOW-CREEK')!;
  const date = HOLLOW_CREEK_ROUNDS[roundIndex]!;
  const rng = seededRng(deriveSeed(DEMO_SEED, 'hollow-creek', roundIndex));
  const drops: DemoDrop[] = [];
  const hung = hollowCreekRopes(site, date, roundIndex, planned);
  const fromSheet = hung.filter((rope) => rope.sampleId.startsWith('HC-'));
  const late = roundIndex === 5;
  const onTimeSheet = late ? fromSheet.filter((rope) => rope.barnId !== 'F3') : fromSheet;
  if (onTimeSheet.length > 0) {
    drops.push({
      at: at(plus(date, 1), 17),
      name: `hollow-creek_ropes_${date}.csv`,
      bytes: ropeSheet(site, onTimeSheet),
      note: 'rope sheet from the barn staff',
    });
  }
  // One planned tube breaks in transit in the first planned round: it never comes back.
  const lost =
    planned.length > 0 && roundIndex === 3
      ? hung.find((rope) => !rope.sampleId.startsWith('HC-') && rope.barnId === 'F2')
      : undefined;
  const { prrsv, iav, reissue } = hollowCreekPcr(rng, hung, lost, roundIndex);
  const reported = plus(date, 3);
  drops.push(...(await hollowCreekResults(prrsv, iav, reported, roundIndex)));
  if (HOLLOW_CREEK_ELISA_ROUNDS.includes(roundIndex)) {
    const tested = hung.filter((rope) => rope !== lost);
    drops.push({
      at: at(reported, 16),
      name: `nvdl_elisa_${reported}.csv`,
      bytes: northfieldExport(elisaRows(tested, roundIndex), reported, 1080 + roundIndex * 100),
      note:
        roundIndex === 1
          ? 'PRRSV antibody ELISA (S/P): 0.21 read negative; one antibody positive in F3 with no virus'
          : 'PRRSV antibody ELISA (S/P ratios) on the same ropes',
    });
  }
  if (reissue) {
    const reissuedOn = plus(date, 4);
    drops.push({
      at: at(reissuedOn, 10),
      name: `nvdl_corrected_${reissuedOn}.csv`,
      bytes: northfieldExport([reissue], reissuedOn, 1000 + roundIndex * 100),
      note: 'a reissued result after re-extraction',
    });
  }
  if (late) {
    const f3 = fromSheet.filter((rope) => rope.barnId === 'F3');
    drops.push({
      at: at(plus(date, 4), 9),
      name: `hollow-creek_ropes_F3_${date}.csv`,
      bytes: ropeSheet(site, f3, { [f3[0]!.sampleId]: 'sheet found in the truck' }),
      note: 'a late rope sheet: its results arrived first',
    });
  }
  if (roundIndex === 3) {
    drops.push({
      at: at(plus(date, 3), 16),
      name: `nvdl_invoice_${plus(date, 3)}.csv`,
      bytes: Buffer.from('Invoice,Client,Samples,Amount\nINV-2291,Larkspur Valley,36,412.00\n', 'utf8'),
      note: `the wrong report template: refused, kept in ${DEFAULT_PATHS.inbox}/${INBOX_FOLDERS.rejected} with its reason`,
    });
  }
  return drops;
}

/**
 * The files of one Tamsin Ridge round: pattern-coded tubes, no rope sheet, an Ostermark export.
 * The farm ropes the pens of ropewatch's plan (when there is one) but labels tubes its own way.
 */
export function tamsinRidgeRound(config: Config, roundIndex: number, planned: readonly RopeChoice[]): DemoDrop[] {
  if (roundIndex === TAMSIN_RIDGE_ROUNDS.length - 1) return tamsinRidgePooledRound(config, roundIndex, planned);
  const site = config.siteById.get('TAMSIN-RIDGE')!;
  const date = TAMSIN_RIDGE_ROUNDS[roundIndex]!;
  const compact = date.replace(/-/g, '');
  const rows: LabRow[] = [];
  for (const barn of site.barns) {
    // Groups: a barn emptied between two groups of pigs gets no rope (N2 on 16 September).
    if (isEmptyOn(barn.groups, date)) continue;
    const fromPlan = planned.filter((rope) => rope.barnId === barn.id);
    const ropes = fromPlan.length > 0 ? fromPlan : farmRopes(barn, roundIndex, 3, () => '');
    for (const rope of ropes) {
      const sampleId = `TR-${barn.id}-${String(Number(rope.penId)).padStart(2, '0')}-${compact}`;
      const controlFailed = roundIndex === 1 && barn.id === 'N2' && rope === ropes[2];
      rows.push({ sampleId, assay: 'PRRSV', ct: null, controlFailed, collectedOn: date });
      rows.push({ sampleId, assay: 'IAV', ct: null, collectedOn: date });
    }
  }
  const reported = plus(date, 2);
  return [
    {
      at: at(reported, 13),
      name: `oahl_befund_${reported}.csv`,
      bytes: ostermarkExport(rows, reported, `OA-${compact}`),
      note: 'Latin-1, semicolons, decimal commas, 0 for not detected',
    },
  ];
}

/**
 * Tamsin Ridge's last round goes to the lab in pools: the farm ropes the planned pens with its
 * own tube labels, sends a rope sheet whose pool column puts three ropes of a barn in each pool
 * (the plan's pool IDs when it gave them), and the lab reports one result per pool under the pool
 * ID. All negative: the summary shows the pooled detection beside the unpooled figure.
 */
function tamsinRidgePooledRound(config: Config, roundIndex: number, planned: readonly RopeChoice[]): DemoDrop[] {
  const site = config.siteById.get('TAMSIN-RIDGE')!;
  const date = TAMSIN_RIDGE_ROUNDS[roundIndex]!;
  const compact = date.replace(/-/g, '');
  const sheet = ['sample_id,site,barn,pen,hung_on,pool'];
  const pools = new Set<string>();
  let sequence = 900;
  for (const barn of site.barns) {
    const fromPlan = planned.filter((rope) => rope.barnId === barn.id);
    const ropes = fromPlan.length > 0 ? fromPlan : farmRopes(barn, roundIndex, 3, () => '');
    let poolId = '';
    ropes.forEach((rope, index) => {
      // The plan's pool when it gave one; otherwise the farm makes pools of three in its walking order.
      if (rope.poolId !== undefined) poolId = rope.poolId;
      else if (index % 3 === 0) {
        do sequence++;
        while (!isWriteFriendlyCheck(formatSampleId({ siteCode: site.code, round: roundIndex + 1, sequence })));
        poolId = formatSampleId({ siteCode: site.code, round: roundIndex + 1, sequence });
      }
      pools.add(poolId);
      const sampleId = `TR-${barn.id}-${String(Number(rope.penId)).padStart(2, '0')}-${compact}`;
      sheet.push([sampleId, site.id, barn.id, rope.penId, date, poolId].map(csvCell).join(','));
    });
  }
  const rows: LabRow[] = [...pools].flatMap((poolId) => [
    { sampleId: poolId, assay: 'PRRSV' as const, ct: null, collectedOn: date },
    { sampleId: poolId, assay: 'IAV' as const, ct: null, collectedOn: date },
  ]);
  const reported = plus(date, 2);
  return [
    {
      at: at(plus(date, 1), 9),
      name: `tamsin-ridge_ropes_${date}.csv`,
      bytes: Buffer.from(sheet.join('\n') + '\n', 'utf8'),
      note: 'a rope sheet with a pool column: three ropes per PCR',
    },
    {
      at: at(reported, 13),
      name: `oahl_befund_${reported}.csv`,
      bytes: ostermarkExport(rows, reported, `OA-${compact}`),
      note: 'one result per pool, under the pool ID',
    },
  ];
}

export { plus as addDaysIso };
