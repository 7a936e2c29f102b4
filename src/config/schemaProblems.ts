/**
 * Schema issues turned into configuration problems a person can act on: every issue of a file
 * at once, an unknown key with the nearest known key at that place ("did you mean
 * designPrevalence?"), and a missing key with what it means.
 */
import type { z } from 'zod';
import { didYouMean, nearestNames } from './nearest.js';
import type { ConfigProblem } from './problems.js';

export function formatPath(segments: readonly PropertyKey[]): string {
  return segments
    .map((segment, index) =>
      typeof segment === 'number' ? `[${segment}]` : `${index === 0 ? '' : '.'}${String(segment)}`,
    )
    .join('');
}

/**
 * What a required key holds, told when it is missing. The two probabilities are judgements about
 * one herd (Martin, Cameron & Greiner 2007 treat both as inputs of the person running the
 * program), so ropewatch asks for them rather than assuming them.
 */
export const REQUIRED_KEY_HELP: Readonly<Record<string, string>> = {
  programDefaults: 'the program settings every site gets (designPrevalence, targetConfidence, ropeSensitivity, ...)',
  sites: 'the sites, each with its barns and their layouts',
  barns: 'the barns of the site, each with its layout',
  layout: 'the barn layout: rows and pensPerRow at least',
  assays: 'the assays ropewatch reads, with their cutoffs and load bands',
  designPrevalence:
    'the smallest share of infected pens a round is meant to find: a proportion such as 0.1, or { pens: 1 }',
  targetConfidence: 'the detection confidence the program aims for in each barn and round, such as 0.95',
  ropeSensitivity:
    'the probability that the rope of an infected pen tests positive: a number, or per assay with a default',
  ropeSpecificity: 'the probability that the rope of a free pen tests negative (1 when positives are confirmed)',
  roundWindowDays: "ropes hung within this many days of a round's first rope belong to that round",
  intervalDays: 'the days between rounds the program intends',
  priorFreedom:
    "the probability that the herd was free before the first round (Martin, Cameron & Greiner 2007): the herd veterinarian's judgement; 0.5 leans neither way",
  introductionPerInterval:
    "the probability that the disease enters the herd between two rounds (Martin, Cameron & Greiner 2007): the herd veterinarian's judgement of its biosecurity and neighbourhood",
  loadBands:
    "Ct bands for the load of a detected sample, lowest Ct first, from the lab's validated curve, e.g. [{ name: high, below: 25 }, { name: moderate, below: 30 }]",
  positiveBelow: 'a Ct strictly below this is positive',
  suspectBelow: 'a Ct from positiveBelow up to (not including) this is suspect',
  cycleLimit: "the assay's last cycle",
  dateFormat: 'the date-fns format of date cells, e.g. yyyy-MM-dd or dd.MM.yyyy',
};

interface SchemaDef {
  type: string;
  shape?: Record<string, unknown>;
  catchall?: unknown;
  innerType?: unknown;
  in?: unknown;
  element?: unknown;
  valueType?: unknown;
  options?: readonly unknown[];
  getter?: () => unknown;
}

function defOf(schema: unknown): SchemaDef | undefined {
  return (schema as { _zod?: { def?: SchemaDef } } | undefined)?._zod?.def;
}

const WRAPPERS = new Set(['optional', 'nullable', 'default', 'prefault', 'readonly', 'catch', 'nonoptional']);

/** The object, array and record schemas a value may be checked against, through wrappers and unions. */
function unwrap(schema: unknown, depth = 0): unknown[] {
  const def = defOf(schema);
  if (def === undefined || depth > 20) return [];
  if (WRAPPERS.has(def.type)) return unwrap(def.innerType, depth + 1);
  if (def.type === 'pipe') return unwrap(def.in, depth + 1);
  if (def.type === 'lazy' && def.getter) return unwrap(def.getter(), depth + 1);
  if (def.type === 'union') return (def.options ?? []).flatMap((option) => unwrap(option, depth + 1));
  return [schema];
}

/** The schemas, as declared (wrappers and unions kept), that check the value at `path`. */
function declaredAt(schema: unknown, path: readonly PropertyKey[]): unknown[] {
  let current = [schema];
  for (const segment of path) {
    const next: unknown[] = [];
    for (const candidate of current.flatMap((declared) => unwrap(declared))) {
      const def = defOf(candidate)!;
      if (def.type === 'object') {
        const child =
          def.shape?.[String(segment)] ?? (defOf(def.catchall)?.type === 'never' ? undefined : def.catchall);
        if (child !== undefined) next.push(child);
      } else if (def.type === 'array' && typeof segment === 'number') {
        next.push(def.element);
      } else if (def.type === 'record') {
        next.push(def.valueType);
      }
    }
    current = next;
  }
  return current;
}

function schemasAt(schema: unknown, path: readonly PropertyKey[]): unknown[] {
  return declaredAt(schema, path).flatMap((declared) => unwrap(declared));
}

/** The options of the union that checks the value at `path`, in the order the schema gives them. */
function unionOptionsAt(schema: unknown, path: readonly PropertyKey[]): readonly unknown[] | undefined {
  for (let declared of declaredAt(schema, path)) {
    for (let depth = 0; depth < 20; depth++) {
      const def = defOf(declared);
      if (def === undefined) break;
      if (def.type === 'union') return def.options;
      if (!WRAPPERS.has(def.type)) break;
      declared = def.innerType;
    }
  }
  return undefined;
}

/** The keys an object at `path` may have (empty when no object schema is found there). */
export function knownKeys(schema: z.ZodType, path: readonly PropertyKey[]): string[] {
  const keys = new Set<string>();
  for (const candidate of schemasAt(schema, path)) {
    const def = defOf(candidate)!;
    if (def.type === 'object') for (const key of Object.keys(def.shape ?? {})) keys.add(key);
  }
  return [...keys];
}

function valueAt(root: unknown, path: readonly PropertyKey[]): unknown {
  let current: unknown = root;
  for (const segment of path) {
    if (current === null || typeof current !== 'object') return undefined;
    current = (current as Record<PropertyKey, unknown>)[segment];
  }
  return current;
}

/** The object at `path` in `root`, when there is one. */
function objectAt(root: unknown, path: readonly PropertyKey[]): Record<string, unknown> | undefined {
  const current = valueAt(root, path);
  return current !== null && typeof current === 'object' && !Array.isArray(current)
    ? (current as Record<string, unknown>)
    : undefined;
}

/** True when the key at `path` is absent from an object that is present. */
function isMissing(root: unknown, path: readonly PropertyKey[]): boolean {
  if (path.length === 0) return false;
  const parent = objectAt(root, path.slice(0, -1));
  return parent !== undefined && !Object.hasOwn(parent, String(path[path.length - 1]));
}

/**
 * A union's issue names what each of its forms found wrong, each told as a problem of its own
 * would be (an unknown key inside `{ pens: 1 }` names the nearest key too).
 */
function issueDetail(schema: z.ZodType, root: unknown, issue: z.core.$ZodIssue): string {
  if (issue.code === 'invalid_union' && issue.errors.length > 0) {
    const options = unionOptionsAt(schema, issue.path);
    const value = valueAt(root, issue.path);
    const forms = issue.errors.map((errors, index) => {
      const option = options?.[index] as z.ZodType | undefined;
      const told =
        option === undefined
          ? errors.map((inner) => ({ keyPath: formatPath(inner.path), detail: inner.message }))
          : schemaProblems(option, value, errors, '');
      return told
        .map((problem) => `${problem.keyPath === '' ? '' : `${problem.keyPath}: `}${problem.detail}`)
        .join(', ');
    });
    return `matches none of its forms: ${forms.join('; or ')}`;
  }
  return issue.message;
}

/**
 * Every issue of one file as problems. An unknown key names the nearest known key at its place;
 * when that key is missing, the one problem says both and the missing key is not told again.
 */
export function schemaProblems(
  schema: z.ZodType,
  value: unknown,
  issues: readonly z.core.$ZodIssue[],
  file: string,
  prefix: readonly PropertyKey[] = [],
): ConfigProblem[] {
  const at = (path: readonly PropertyKey[]) => formatPath([...prefix, ...path]);
  // First the unknown keys, whose suggestions may explain a missing key; then every issue in
  // the order the schema met them.
  const unknownKey = new Map<z.core.$ZodIssue, ConfigProblem[]>();
  const explained = new Set<string>();
  for (const issue of issues) {
    if (issue.code !== 'unrecognized_keys') continue;
    const present = new Set(Object.keys(objectAt(value, issue.path) ?? {}));
    const known = knownKeys(schema, issue.path);
    const absent = known.filter((key) => !present.has(key));
    unknownKey.set(
      issue,
      issue.keys.map((key) => {
        const near = nearestNames(key, absent);
        if (near.length === 1 && isMissing(value, [...issue.path, near[0]!]))
          explained.add(at([...issue.path, near[0]!]));
        // A key near one that is given too ("Barns" beside "barns") is most likely a leftover.
        const given = near.length === 0 ? nearestNames(key, present) : [];
        const detail =
          near.length > 0
            ? `unknown key ${JSON.stringify(key)}: ${didYouMean(key, absent)}`
            : given.length > 0
              ? `unknown key ${JSON.stringify(key)}: ${didYouMean(key, given)} (given too: keep one)`
              : `unknown key ${JSON.stringify(key)}${known.length > 0 ? `; the keys here are ${known.join(', ')}` : ''}`;
        return { file, keyPath: at([...issue.path, key]), detail };
      }),
    );
  }
  const problems: ConfigProblem[] = [];
  const told = new Set<string>();
  for (const issue of issues) {
    const unknown = unknownKey.get(issue);
    if (unknown !== undefined) {
      problems.push(...unknown);
      continue;
    }
    const keyPath = at(issue.path);
    if (isMissing(value, issue.path) && (issue.code === 'invalid_type' || issue.code === 'invalid_union')) {
      if (explained.has(keyPath) || told.has(keyPath)) continue;
      told.add(keyPath);
      const help = REQUIRED_KEY_HELP[String(issue.path[issue.path.length - 1])];
      problems.push({ file, keyPath, detail: `is missing${help === undefined ? '' : `: ${help}`}` });
      continue;
    }
    problems.push({ file, keyPath, detail: issueDetail(schema, value, issue) });
  }
  return problems;
}
