/**
 * The files the demo's invented labs and farms send: the Northfield export (CSV and Excel
 * workbook), the Ostermark export, and a rope sheet in ropewatch's own layout. Only invented
 * data; the bytes are the same for the same rows on every run.
 */
import { format, parseISO } from 'date-fns';
import type { Site } from '../config/types.js';
import { demoWorkbook } from './workbook.js';

/** A rope a farm hangs: its tube's sample ID and the pen it hangs in. */
export interface RopeChoice {
  sampleId: string;
  barnId: string;
  penId: string;
  /** The pool the plan put the rope in, when the program pools ropes. */
  poolId?: string;
}

/** A CSV cell, quoted when it holds a quote, a separator or a line break. */
export function csvCell(value: string): string {
  return /[",;\n]/.test(value) ? `"${value.replace(/"/g, '""')}"` : value;
}

/** A PCR result row of a lab export. */
export interface LabRow {
  sampleId: string;
  assay: 'PRRSV' | 'IAV';
  ct: number | null;
  controlFailed?: boolean;
  status?: string;
  collectedOn: string;
}

/** An antibody ELISA row: the S/P ratio of the rope's oral fluid. */
export interface ElisaRow {
  sampleId: string;
  assay: 'PRRSV-AB';
  sp: number;
  collectedOn: string;
}

/** The S/P at or above which Northfield calls its PRRSV oral-fluid ELISA positive (its demo profile). */
const NORTHFIELD_SP_POSITIVE = 0.4;

/** The header of the (invented) Northfield lab export, as src/demo/config/labs/northfield.yaml names it. */
export const NORTHFIELD_HEADER = [
  'Case No',
  'Sample ID',
  'Test Name',
  'Ct Value',
  'Interpretation',
  'Internal Control',
  'Collection Date',
  'Report Date',
  'Report Status',
] as const;

/**
 * Northfield's cells for each row, and its numeric result as a number (null when the cell says
 * something else). The lab has one export template: an ELISA's S/P ratio comes in the same
 * numeric column as a Ct, and an ELISA has no internal control (the cell is left blank).
 */
function northfieldCells(
  rows: readonly (LabRow | ElisaRow)[],
  reportedOn: string,
  firstCase: number,
): { cells: string[]; ct: number | null }[] {
  const testName = {
    PRRSV: 'PRRSV NA/EU RT-PCR',
    IAV: 'Influenza A Matrix RT-PCR',
    'PRRSV-AB': 'PRRSV Oral Fluid Antibody ELISA',
  } as const;
  const positiveBelow = { PRRSV: 36, IAV: 38 } as const;
  return rows.map((row, index) => {
    const elisa = row.assay === 'PRRSV-AB';
    const call =
      row.assay === 'PRRSV-AB'
        ? row.sp >= NORTHFIELD_SP_POSITIVE
          ? 'Positive'
          : 'Negative'
        : row.controlFailed
          ? 'Invalid'
          : row.ct === null
            ? 'Negative'
            : row.ct < positiveBelow[row.assay]
              ? 'Positive'
              : 'Suspect';
    const value =
      row.assay === 'PRRSV-AB'
        ? row.sp.toFixed(2)
        : row.controlFailed
          ? ''
          : row.ct === null
            ? 'Undetermined'
            : row.ct.toFixed(2);
    const numeric = row.assay === 'PRRSV-AB' ? Number(row.sp.toFixed(2)) : row.controlFailed ? null : row.ct;
    const control = row.assay === 'PRRSV-AB' ? '' : row.controlFailed ? 'FAIL' : 'PASS';
    const status = row.assay === 'PRRSV-AB' ? undefined : row.status;
    return {
      ct: numeric,
      cells: [
        `NV26-${String(firstCase + Math.floor(index / (elisa ? 1 : 2))).padStart(5, '0')}`,
        row.sampleId,
        testName[row.assay],
        value,
        call,
        control,
        row.collectedOn,
        reportedOn,
        status ?? 'Final',
      ],
    };
  });
}

/** A Northfield export: comma-separated UTF-8, ISO dates, "Undetermined" for no signal. */
export function northfieldExport(rows: readonly (LabRow | ElisaRow)[], reportedOn: string, firstCase: number): Buffer {
  const lines = [NORTHFIELD_HEADER.join(',')];
  for (const { cells } of northfieldCells(rows, reportedOn, firstCase)) lines.push(cells.map(csvCell).join(','));
  return Buffer.from(lines.join('\n') + '\n', 'utf8');
}

/**
 * The same export as a Northfield workbook: sheet "Results", a title and a blank row above the
 * header (the demo profile's workbook.headerRow: 3), Ct values as numbers, dates as date cells.
 * `at` is the moment it was saved: the same rows and moment give the same bytes.
 */
export async function northfieldWorkbook(
  rows: readonly LabRow[],
  reportedOn: string,
  firstCase: number,
  at: string,
): Promise<Buffer> {
  const dateCell = (iso: string) => parseISO(`${iso}T00:00:00Z`);
  const body = northfieldCells(rows, reportedOn, firstCase).map(({ cells, ct }) =>
    cells.map((cell, column) =>
      column === 3 && ct !== null ? ct : column === 6 || column === 7 ? dateCell(cell) : cell === '' ? null : cell,
    ),
  );
  return demoWorkbook(
    [
      {
        name: 'Results',
        rows: [[`Results report ${reportedOn} (invented)`], [], NORTHFIELD_HEADER, ...body],
        dateColumns: [7, 8],
        widths: [12, 26, 26, 10, 14, 16, 16, 14, 14],
      },
    ],
    parseISO(at),
    'Northfield Veterinary Diagnostic Laboratory (invented)',
  );
}

/** An Ostermark export: a title line, semicolons, decimal commas, dd.MM.yyyy, Latin-1, CRLF, 0 for no signal. */
export function ostermarkExport(rows: readonly LabRow[], reportedOn: string, order: string): Buffer {
  const test = { PRRSV: 'PRRSV RT-qPCR', IAV: 'Influenza A RT-qPCR' } as const;
  const day = (iso: string) => format(parseISO(iso), 'dd.MM.yyyy');
  const lines = ['Befundübersicht Oralflüssigkeiten', 'Auftrag;Probe;Untersuchung;Ct;Befund;IK;Entnahme;Befunddatum'];
  for (const row of rows) {
    const befund = row.controlFailed ? 'ungültig' : row.ct === null ? 'negativ' : 'positiv';
    const ct = row.controlFailed ? '' : row.ct === null ? '0' : row.ct.toFixed(1).replace('.', ',');
    lines.push(
      [
        order,
        row.sampleId,
        test[row.assay],
        ct,
        befund,
        row.controlFailed ? 'fehlerhaft' : 'ok',
        day(row.collectedOn),
        day(reportedOn),
      ].join(';'),
    );
  }
  return Buffer.from(lines.join('\r\n') + '\r\n', 'latin1');
}

/** A rope sheet in ropewatch's own layout. */
export function ropeSheet(
  site: Site,
  ropes: readonly (RopeChoice & { hungOn: string })[],
  notes: Record<string, string> = {},
): Buffer {
  const lines = ['sample_id,site,barn,pen,hung_on,notes'];
  for (const rope of ropes)
    lines.push(
      [rope.sampleId, site.id, rope.barnId, rope.penId, rope.hungOn, notes[rope.sampleId] ?? ''].map(csvCell).join(','),
    );
  return Buffer.from(lines.join('\n') + '\n', 'utf8');
}
