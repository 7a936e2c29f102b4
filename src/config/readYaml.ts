/** Reading one YAML configuration file and checking it against its schema. */
import fs from 'node:fs';
import YAML from 'yaml';
import type { z } from 'zod';
import { ConfigError, type ProblemList } from './problems.js';
import { schemaProblems } from './schemaProblems.js';

/**
 * How far one YAML anchor may be expanded: its uses times the aliases nested in it (the yaml
 * package's maxAliasCount). The package's default, 100, would refuse one barn layout shared by
 * a hundred barns; a thousand still stops nested aliases that multiply ("billion laughs") at
 * the second or third level.
 */
const MAX_YAML_ALIASES = 1000;

function readYaml(file: string): unknown {
  let text: string;
  try {
    text = fs.readFileSync(file, 'utf8');
  } catch (error) {
    throw new ConfigError(file, '', `cannot be read (${(error as NodeJS.ErrnoException).code ?? String(error)})`);
  }
  const doc = YAML.parseDocument(text, { prettyErrors: true });
  if (doc.errors.length > 0) {
    // The first syntax error only: the parser's later errors mostly follow from it.
    const first = doc.errors[0]!;
    const where = first.linePos?.[0] ? `line ${first.linePos[0].line}, column ${first.linePos[0].col}` : '';
    throw new ConfigError(file, where, `is not valid YAML: ${first.message.split('\n')[0]}`);
  }
  try {
    // Aliases are expanded here; past the limit the yaml package throws a ReferenceError
    // (yaml 2 docs, ToJSOptions.maxAliasCount).
    return doc.toJS({ maxAliasCount: MAX_YAML_ALIASES });
  } catch (error) {
    const detail = (error as Error).message;
    if (/alias/i.test(detail)) {
      throw new ConfigError(
        file,
        '',
        `expands YAML aliases (*name) too far: an anchor's uses times the aliases inside it exceed ${MAX_YAML_ALIASES}, as in a "billion laughs" file; write the values out or use fewer nested aliases`,
      );
    }
    throw new ConfigError(file, '', `cannot be read as YAML data: ${detail}`);
  }
}

/**
 * Reads one file and checks it against `schema`: its data, or undefined with every problem
 * recorded. An empty file is `empty` when given (an optional file may be empty).
 */
export function readValid<S extends z.ZodType>(
  schema: S,
  file: string,
  problems: ProblemList,
  empty?: unknown,
): z.output<S> | undefined {
  let value: unknown;
  try {
    value = readYaml(file);
  } catch (error) {
    if (!(error instanceof ConfigError)) throw error;
    problems.addAll(error.problems);
    return undefined;
  }
  if (value === null || value === undefined) {
    if (empty === undefined) {
      problems.add(file, '', 'is empty');
      return undefined;
    }
    value = empty;
  }
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  problems.addAll(schemaProblems(schema, value, result.error.issues, file));
  return undefined;
}
