/**
 * One rope-sheet record to one rope row, or to a refusal naming the line and the sheet's own
 * header for the field. Pure: the sites, the header index and the planned-ID check are passed in.
 */
import type { Barn, Site } from '../config/types.js';
import { canonicalPenKey, isInUse, type Pen } from '../domain/layout.js';
import { findSite } from '../config/names.js';
import { foldToken } from '../util/fold.js';
import { rowRejection, type RejectionCode, type RowRejection } from './errors.js';
import { normaliseSampleId, parseDateCell, type PlannedIdCheck } from './recordCells.js';
import type { RopeRow } from '../domain/records.js';
import type { RowOutcome } from './rowTypes.js';

export interface RopeContext {
  fileName: string;
  /** Position of each column under its own name (sample_id, site, barn, pen, hung_on, notes). */
  columnIndex: ReadonlyMap<string, number>;
  /** The header cell of each column as the sheet writes it ("Collected on"): refusals name the field so. */
  columnNames?: ReadonlyMap<string, string>;
  sites: readonly Site[];
  plannedIdCheck: PlannedIdCheck;
}

type Refused = { ok: false; rejection: RowRejection };

/** The trimmed cell of a column under its own name; empty when the sheet lacks the column. */
function cellOf(cells: readonly string[], context: RopeContext, column: string): string {
  const position = context.columnIndex.get(column);
  return position === undefined ? '' : (cells[position] ?? '').trim();
}

/** A refusal naming the field by the sheet's header (looked up only for a refused row). */
function refuseColumn(
  context: RopeContext,
  line: number,
  code: RejectionCode,
  column: string,
  value: string,
  detail: string,
): Refused {
  return {
    ok: false,
    rejection: rowRejection({ code, line, field: context.columnNames?.get(column) ?? column, value, detail }),
  };
}

/** The site, barn and pen a record names, each by the sheet's text. */
function placeOf(
  cells: readonly string[],
  line: number,
  context: RopeContext,
): { site: Site; barn: Barn; pen: Pen } | Refused {
  const siteText = cellOf(cells, context, 'site');
  const site = findSite(context.sites, siteText);
  if (!site)
    return siteText === ''
      ? refuseColumn(context, line, 'missing-value', 'site', siteText, 'the site is empty')
      : refuseColumn(context, line, 'unknown-site', 'site', siteText, `no site "${siteText}" in sites.yaml`);
  const barnText = cellOf(cells, context, 'barn');
  const barn =
    site.barnById.get(barnText.toUpperCase()) ??
    site.barns.find((candidate) => foldToken(candidate.name) === foldToken(barnText));
  if (!barn)
    return refuseColumn(
      context,
      line,
      barnText === '' ? 'missing-value' : 'unknown-barn',
      'barn',
      barnText,
      `site ${site.id} has no barn "${barnText}"`,
    );
  const penText = cellOf(cells, context, 'pen');
  const pen = barn.penByKey.get(canonicalPenKey(penText));
  if (!pen)
    return refuseColumn(
      context,
      line,
      penText === '' ? 'missing-value' : 'unknown-pen',
      'pen',
      penText,
      `barn ${barn.id} on site ${site.id} has no pen "${penText}"`,
    );
  return { site, barn, pen };
}

/** The pool the rope was tested in (normalised), null when the record names none. */
function poolOf(
  cells: readonly string[],
  line: number,
  context: RopeContext,
  sampleId: string,
): string | null | Refused {
  const poolText = cellOf(cells, context, 'pool');
  if (poolText === '') return null;
  const pool = context.plannedIdCheck(normaliseSampleId(poolText), line);
  if (pool.kind === 'bad-check')
    return refuseColumn(
      context,
      line,
      'bad-check-character',
      'pool',
      poolText,
      `pool ID ${poolText} fails its check character: probably mistyped`,
    );
  const poolId = pool.kind === 'planned' || pool.kind === 'corrected' ? pool.canonical : normaliseSampleId(poolText);
  // A pool ID names the pool's tube: the rope's own ID would make one tube two things.
  if (poolId === sampleId)
    return refuseColumn(
      context,
      line,
      'bad-pool',
      'pool',
      poolText,
      `pool ID ${poolText} is the rope's own sample ID; a pool gets an ID of its own`,
    );
  return poolId;
}

/** Maps one rope-sheet record (sample_id, site, barn, pen, hung_on, optional notes and pool, under whatever header names the sheet gives them). */
export function mapRopeRow(cells: readonly string[], line: number, context: RopeContext): RowOutcome<RopeRow> {
  const rawSample = cellOf(cells, context, 'sample_id');
  if (rawSample === '')
    return refuseColumn(context, line, 'missing-value', 'sample_id', rawSample, 'the sample ID is empty');
  const checked = context.plannedIdCheck(normaliseSampleId(rawSample), line);
  if (checked.kind === 'bad-check') {
    return refuseColumn(
      context,
      line,
      'bad-check-character',
      'sample_id',
      rawSample,
      `sample ID ${rawSample} fails its check character: probably mistyped`,
    );
  }
  const sampleId =
    checked.kind === 'planned' || checked.kind === 'corrected' ? checked.canonical : normaliseSampleId(rawSample);
  const place = placeOf(cells, line, context);
  if ('rejection' in place) return place;
  const { site, barn, pen } = place;
  const dateText = cellOf(cells, context, 'hung_on');
  if (dateText === '')
    return refuseColumn(context, line, 'missing-value', 'hung_on', dateText, 'the date the rope was hung is empty');
  const hungOn = parseDateCell(dateText, 'dd.MM.yyyy');
  if (!hungOn)
    return refuseColumn(
      context,
      line,
      'bad-date',
      'hung_on',
      dateText,
      `"${dateText}" is not a date (write yyyy-mm-dd)`,
    );
  const notes = cellOf(cells, context, 'notes');
  const poolId = poolOf(cells, line, context, sampleId);
  if (poolId !== null && typeof poolId === 'object') return poolId;
  return {
    ok: true,
    row: {
      line,
      sampleId,
      siteId: site.id,
      barnId: barn.id,
      penId: pen.id,
      hungOn,
      note: notes === '' ? null : notes,
      sampleIdAsWritten: checked.kind === 'corrected' ? checked.written : null,
      warning: isInUse(pen) ? undefined : `pen ${pen.id} is listed as ${pen.status} in the layout; the rope is kept`,
      poolId,
    },
  };
}
