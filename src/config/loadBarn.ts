/** One barn of sites.yaml: its layout expanded into pens and checked, its groups of pigs. */
import type { z } from 'zod';
import {
  canonicalPenKey,
  expandLayout,
  isInUse,
  penContacts,
  pensByKey,
  type BarnLayout,
  type Pen,
} from '../domain/layout.js';
import { groupProblems, inPlacementOrder } from '../rounds/pigGroups.js';
import { matchKey } from './names.js';
import { ConfigError, type ProblemList } from './problems.js';
import type { sitesFileSchema } from './sitesSchema.js';
import type { Barn } from './types.js';

type RawBarn = z.output<typeof sitesFileSchema>['sites'][number]['barns'][number];

/** One barn: its layout expanded and checked. @throws ConfigError when the layout cannot be expanded. */
export function loadBarn(
  barn: RawBarn,
  file: string,
  at: (...rest: PropertyKey[]) => string,
  problems: ProblemList,
): Barn {
  const rawLayout = barn.layout;
  const defaultLabels = ['A', 'B', 'C', 'D'].slice(0, rawLayout.rows);
  const layout: BarnLayout = {
    rows: rawLayout.rows,
    pensPerRow: rawLayout.pensPerRow,
    numbering: rawLayout.numbering,
    rowLabels: rawLayout.rowLabels ?? defaultLabels,
    padDigits: rawLayout.padDigits,
    penWidth: rawLayout.penWidth,
    penDepth: rawLayout.penDepth,
    alleyWidth: rawLayout.alleyWidth,
    gapsAfter: rawLayout.gapsAfter,
    gapWidth: rawLayout.gapWidth,
    empty: [],
    outOfUse: [],
    ...(rawLayout.headCount ? { headCount: rawLayout.headCount } : {}),
  };
  let pens: Pen[];
  try {
    // First without statuses, to know the pens the lists may name.
    const allPens = expandLayout(layout);
    layout.empty = resolvePenRefs(
      rawLayout.empty,
      allPens,
      layout,
      (index) => at('layout', 'empty', index),
      file,
      problems,
    );
    layout.outOfUse = resolvePenRefs(
      rawLayout.outOfUse,
      allPens,
      layout,
      (index) => at('layout', 'outOfUse', index),
      file,
      problems,
    );
    pens = expandLayout(layout);
  } catch (error) {
    if (error instanceof RangeError) throw new ConfigError(file, at('layout'), error.message);
    throw error;
  }
  checkPenKeys(pens, layout, file, (...rest) => at('layout', ...rest), problems);
  if (!pens.some(isInUse)) problems.add(file, at('layout'), 'has no pen in use');
  const groups = (barn.groups ?? []).map((group) =>
    Object.freeze({
      id: group.id,
      label: group.label ?? group.id,
      placedOn: group.placedOn,
      closedOn: group.closedOn ?? null,
    }),
  );
  for (const problem of groupProblems(groups))
    problems.add(file, at('groups', problem.index, problem.key), problem.detail);
  return Object.freeze({
    id: barn.id,
    name: barn.name ?? barn.id,
    position: barn.position,
    ageGroup: barn.ageGroup,
    layout,
    groups: Object.freeze(inPlacementOrder(groups)),
    pens,
    penById: new Map(pens.map((pen) => [pen.id.toUpperCase(), pen])),
    penByKey: pensByKey(pens),
    contacts: penContacts(layout, pens),
  });
}

/**
 * The pen ids an `empty` or `outOfUse` list names. A number (written without quotes, which YAML
 * reads as a number) is the pen of that number as painted: 7 is pen 07 in a padded layout. A
 * text must be the pen's label as the layout writes it, like head counts.
 */
function resolvePenRefs(
  refs: readonly (string | number)[],
  pens: readonly Pen[],
  layout: BarnLayout,
  at: (index: number) => string,
  file: string,
  problems: ProblemList,
): string[] {
  const ids = new Set(pens.map((pen) => pen.id));
  const byKey = pensByKey(pens);
  const resolved: string[] = [];
  refs.forEach((ref, index) => {
    const text = String(ref);
    if (typeof ref === 'string' && ids.has(ref)) {
      resolved.push(ref);
      return;
    }
    const pen = byKey.get(canonicalPenKey(text));
    if (typeof ref === 'number' && pen !== undefined) {
      resolved.push(pen.id);
      return;
    }
    const hint =
      pen !== undefined
        ? ` (write ${pen.id}, as the layout labels it)`
        : layout.numbering === 'per-row' && /^\d+$/.test(text)
          ? ` (pens are numbered per row: write the row label too, e.g. ${layout.rowLabels[0] ?? 'A'}${text})`
          : '';
    problems.add(file, at(index), `names pen ${text}, which is not in the layout${hint}`);
  });
  return resolved;
}

/**
 * Refuses row labels, and pens, that the code would take for one another: results and rope
 * sheets find a pen by its canonical key (canonicalPenKey: "a01" is A1), so rows labelled A and
 * a, or A and A0 (A01 and A1), would put ropes in the wrong pen. Head counts must name pens.
 */
function checkPenKeys(
  pens: readonly Pen[],
  layout: BarnLayout,
  file: string,
  at: (...rest: PropertyKey[]) => string,
  problems: ProblemList,
): void {
  const labels = new Map<string, number>();
  let labelsClash = false;
  layout.rowLabels.forEach((label, row) => {
    const earlier = labels.get(matchKey(label));
    if (earlier !== undefined) {
      problems.add(
        file,
        at('rowLabels', row),
        `row label ${JSON.stringify(label)} is the same as row label ${JSON.stringify(layout.rowLabels[earlier])} when matched (case and spacing are ignored)`,
      );
      labelsClash = true;
      return;
    }
    labels.set(matchKey(label), row);
  });
  // Rows that match give pens that match: told once, at the row label.
  if (labelsClash) return;
  const byKey = new Map<string, Pen>();
  for (const pen of pens) {
    const key = canonicalPenKey(pen.id);
    const earlier = byKey.get(key);
    if (earlier !== undefined) {
      problems.add(
        file,
        layout.numbering === 'per-row' ? at('rowLabels', pen.row) : at('numbering'),
        `pens ${earlier.id} and ${pen.id} are the same pen when matched (${key}: case, spaces and leading zeros are ignored); choose row labels that do not end in a digit`,
      );
      // One such clash per barn tells the cause; the rest of the row would repeat it.
      break;
    }
    byKey.set(key, pen);
  }
  const ids = new Set(pens.map((pen) => pen.id));
  for (const id of Object.keys(layout.headCount?.pens ?? {})) {
    if (ids.has(id)) continue;
    const near = byKey.get(canonicalPenKey(id));
    problems.add(
      file,
      at('headCount', 'pens', id),
      `names pen ${id}, which is not in the layout${near === undefined ? '' : ` (write ${near.id}, as the layout labels it)`}`,
    );
  }
}
