/**
 * Regular expressions from the configuration (a site's `samplePattern`, a lab's
 * `fileNamePattern`), matched in time linear in the text whatever the pattern.
 *
 * JavaScript's RegExp backtracks: a pattern such as `((a+)+)$` takes time exponential in the
 * length of a text it does not match (a 34-character sample ID ran for minutes, holding the
 * store's write lock). RE2's automata simulate every alternative at once and never back up
 * (Cox 2007, "Regular Expression Matching Can Be Simple And Fast"); re2js is a port of Go's
 * regexp package. The price is RE2 syntax: no lookaround and no backreferences, which only a
 * backtracking engine can run. Callers see the small interface below, not the library.
 */
import { RE2JS, RE2Set } from 're2js';
import { ConfigError } from './problems.js';

/** Named groups of a match; a group that took no part in the match is undefined. */
export type PatternGroups = Readonly<Record<string, string | undefined>>;

export interface ConfiguredPattern {
  /** The pattern as configured. */
  readonly source: string;
  /** Whether the pattern matches somewhere in `text` (case-insensitive, like the RegExp `i` flag). */
  test(text: string): boolean;
  /** The named groups of the first match in `text`, or null when there is none. */
  exec(text: string): PatternGroups | null;
}

/** Why a configured pattern cannot be used; the message is written for the person editing the YAML. */
export class PatternSyntaxError extends Error {
  override readonly name = 'PatternSyntaxError';
}

/** Longest pattern accepted: configuration patterns are a line of text, and RE2 compiles in time linear in the pattern. */
export const MAX_PATTERN_LENGTH = 1000;

// Constructs that need backtracking: lookahead and lookbehind groups, numbered and named backreferences.
const BACKTRACKING_ONLY = /\(\?<?[=!]|\\[1-9]|\\k</;

class LinearPattern implements ConfiguredPattern {
  // Private fields do not cross structured clone (the parse worker receives `{ source }` and
  // compiles again, see revivePattern); the automaton stays on the thread that built it.
  readonly #compiled: RE2JS;
  readonly #groupNames: readonly string[];
  /** Each named group's number, in the order of #groupNames. */
  readonly #groupNumbers: readonly number[];
  /** Position pairs a match fills: the whole match and every group. */
  readonly #pairs: number;

  constructor(readonly source: string) {
    this.#compiled = RE2JS.compile(source, RE2JS.CASE_INSENSITIVE);
    const named = this.#compiled.namedGroups();
    this.#groupNames = Object.keys(named);
    this.#groupNumbers = this.#groupNames.map((name) => named[name]!);
    this.#pairs = 1 + this.#compiled.groupCount();
  }

  get groupNames(): readonly string[] {
    return this.#groupNames;
  }

  test(text: string): boolean {
    return this.#compiled.test(text);
  }

  /**
   * One pass that records the groups as it matches. A Matcher's find() first runs the automaton
   * for the match's bounds only, then runs it again from the match's start for the groups; both
   * give RE2's leftmost-first match, so asking for the groups at once gives the same groups.
   */
  exec(text: string): PatternGroups | null {
    const [found, positions] = this.#compiled
      .re2()
      .matchWithGroup(text, 0, text.length, RE2Set.UNANCHORED, this.#pairs) as [boolean, number[] | null];
    if (!found || positions === null) return null;
    const groups: Record<string, string | undefined> = {};
    const names = this.#groupNames;
    const numbers = this.#groupNumbers;
    for (let i = 0; i < names.length; i++) {
      const at = 2 * numbers[i]!;
      const start = positions[at]!;
      const end = positions[at + 1]!;
      // A group that took no part in the match has no bounds (-1).
      groups[names[i]!] = start < 0 && end < 0 ? undefined : text.substring(start, end);
    }
    return groups;
  }
}

/**
 * Compiles a configured pattern (case-insensitive) for linear-time matching.
 * @param requiredGroups named groups the pattern must have, e.g. `barn` and `pen`
 * @throws PatternSyntaxError when RE2 cannot compile it (lookaround, backreferences, bad syntax) or a group is missing
 */
export function compileConfiguredPattern(source: string, requiredGroups: readonly string[] = []): ConfiguredPattern {
  if (source.length > MAX_PATTERN_LENGTH) {
    throw new PatternSyntaxError(`is ${source.length} characters long; at most ${MAX_PATTERN_LENGTH} are accepted`);
  }
  let pattern: LinearPattern;
  try {
    pattern = new LinearPattern(source);
  } catch (error) {
    const detail = (error as Error).message.replace(/^error parsing regexp: /, '');
    if (BACKTRACKING_ONLY.test(source)) {
      throw new PatternSyntaxError(
        `uses lookaround or a backreference, which are not supported: patterns are matched in linear time (RE2 syntax), so (?=...), (?!...), (?<=...), (?<!...), \\1 and \\k<name> cannot be used (${detail})`,
      );
    }
    throw new PatternSyntaxError(
      `is not a regular expression ropewatch can use (RE2 syntax; lookaround and backreferences are not supported): ${detail}`,
    );
  }
  for (const group of requiredGroups) {
    if (!pattern.groupNames.includes(group)) throw new PatternSyntaxError(`needs a named group (?<${group}>...)`);
  }
  return pattern;
}

/** A pattern from a configuration file: a syntax error is a ConfigError at its key path. */
export function compilePattern(
  source: string,
  file: string,
  keyPath: string,
  groups: readonly string[],
): ConfiguredPattern {
  try {
    return compileConfiguredPattern(source, groups);
  } catch (error) {
    if (error instanceof PatternSyntaxError) throw new ConfigError(file, keyPath, error.message);
    throw error;
  }
}

/**
 * The pattern ready to match after a structured clone (a worker thread receives only its
 * `source`); a pattern that still works is returned as it is.
 */
export function revivePattern(pattern: ConfiguredPattern): ConfiguredPattern;
export function revivePattern(pattern: ConfiguredPattern | undefined): ConfiguredPattern | undefined;
export function revivePattern(pattern: ConfiguredPattern | undefined): ConfiguredPattern | undefined {
  if (pattern === undefined || pattern instanceof LinearPattern) return pattern;
  return compileConfiguredPattern(pattern.source);
}

/** Several configured patterns asked at once which of them match a text. */
export interface PatternSet {
  /** Positions (in the list the set was built from) of the patterns that match somewhere in `text`. */
  matching(text: string): readonly number[];
}

const NO_MATCH: readonly number[] = Object.freeze([]);

/**
 * One automaton for many patterns (RE2's set matching): which of them match takes one linear
 * pass over the text, whatever their number, where asking each in turn costs a pass per
 * pattern. Case-insensitive, like each pattern alone.
 */
export function compilePatternSet(patterns: readonly ConfiguredPattern[]): PatternSet {
  if (patterns.length === 0) return { matching: () => NO_MATCH };
  const set = new RE2Set(RE2Set.UNANCHORED, RE2JS.CASE_INSENSITIVE);
  for (const pattern of patterns) set.add(pattern.source);
  set.compile();
  return { matching: (text) => set.match(text) };
}
