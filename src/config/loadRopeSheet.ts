/** The rope sheet's header names, as sites.yaml configures them (ropeSheet.columns). */
import type { ProblemList } from './problems.js';
import { ROPE_SHEET_COLUMN_ORDER, ROPE_SHEET_MEANING, ropeColumnNames, ropeHeaderKey } from './ropeSheet.js';
import type { RopeSheetColumn, RopeSheetColumns } from './types.js';

/**
 * The header names each rope-sheet column accepts: its own name, then the configured names or
 * the default synonyms. A name (as compared: case, spaces and punctuation ignored) may belong to
 * one column only, or a header cell could be read as either; a clash is told at the configured
 * name.
 */
export function ropeSheetColumns(
  configured: Partial<Record<RopeSheetColumn, string | readonly string[]>> | undefined,
  file: string,
  problems: ProblemList,
): RopeSheetColumns {
  type Claim = { column: RopeSheetColumn; name: string; keyPath: string | undefined };
  const claims = new Map<string, Claim>();
  const columns = {} as Record<RopeSheetColumn, readonly string[]>;
  for (const column of ROPE_SHEET_COLUMN_ORDER) {
    const given = configured?.[column];
    const list = given === undefined ? undefined : typeof given === 'string' ? [given] : given;
    const names = ropeColumnNames(column, list);
    columns[column] = Object.freeze(names);
    for (const name of names) {
      const index = list?.indexOf(name) ?? -1;
      const keyPath =
        index < 0
          ? undefined
          : typeof given === 'string'
            ? `ropeSheet.columns.${column}`
            : `ropeSheet.columns.${column}[${index}]`;
      const key = ropeHeaderKey(name);
      if (key === '') {
        problems.add(
          file,
          keyPath ?? `ropeSheet.columns.${column}`,
          `${JSON.stringify(name)} has no letter or digit, so no header cell can match it`,
        );
        continue;
      }
      const earlier = claims.get(key);
      if (earlier === undefined) {
        claims.set(key, { column, name, keyPath });
        continue;
      }
      if (earlier.column === column) continue;
      const describe = (claim: Claim) =>
        claim.keyPath === undefined
          ? `a default name of the ${claim.column} column (${ROPE_SHEET_MEANING[claim.column]})`
          : `the ${claim.column} column's name at ${claim.keyPath}`;
      const [told, other] =
        keyPath !== undefined ? [{ column, name, keyPath }, earlier] : [earlier, { column, name, keyPath }];
      const remedy =
        other.keyPath === undefined
          ? `; to use it for ${told.column}, give ropeSheet.columns.${other.column} names of its own`
          : '';
      problems.add(
        file,
        told.keyPath ?? `ropeSheet.columns.${told.column}`,
        `${JSON.stringify(told.name)} is also ${describe(other)}: a header name may belong to one column only (case, spaces and punctuation ignored)${remedy}`,
      );
    }
  }
  return Object.freeze(columns);
}
