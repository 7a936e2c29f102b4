/**
 * Configuration problems: each names its file and key path. The loader gathers every problem it
 * can find before it stops, so that one run shows a person all there is to fix.
 */

export interface ConfigProblem {
  readonly file: string;
  /** Where in the file, e.g. `sites[0].barns[1].layout.rows`; empty for the file as a whole. */
  readonly keyPath: string;
  readonly detail: string;
}

export function formatProblem(problem: ConfigProblem): string {
  return `${problem.file}${problem.keyPath ? ` at ${problem.keyPath}` : ''}: ${problem.detail}`;
}

/**
 * One or more configuration problems. `file`, `keyPath` and `detail` are the first problem's,
 * and the message begins with it, so code that handles one problem keeps working; the message
 * then lists the others, one a line.
 */
export class ConfigError extends Error {
  override readonly name = 'ConfigError';
  readonly code = 'config';
  readonly file: string;
  readonly keyPath: string;
  readonly detail: string;
  readonly problems: readonly ConfigProblem[];

  constructor(file: string, keyPath: string, detail: string, more: readonly ConfigProblem[] = []) {
    const problems = [{ file, keyPath, detail }, ...more];
    super(
      problems.length === 1
        ? formatProblem(problems[0]!)
        : `${formatProblem(problems[0]!)}\nand ${problems.length - 1} more configuration problem${problems.length === 2 ? '' : 's'}:\n${problems
            .slice(1)
            .map((problem) => `  ${formatProblem(problem)}`)
            .join('\n')}`,
    );
    this.file = file;
    this.keyPath = keyPath;
    this.detail = detail;
    this.problems = Object.freeze(problems);
  }

  /** All of `problems` in one error (at least one). */
  static of(problems: readonly ConfigProblem[]): ConfigError {
    const [first, ...more] = problems;
    if (first === undefined) throw new RangeError('`problems` must hold at least one problem, got 0');
    return new ConfigError(first.file, first.keyPath, first.detail, more);
  }
}

/** Gathers problems; a check that cannot go on throws ConfigError, which `guard` records. */
export class ProblemList {
  readonly list: ConfigProblem[] = [];

  add(file: string, keyPath: string, detail: string): void {
    this.list.push({ file, keyPath, detail });
  }

  addAll(problems: readonly ConfigProblem[]): void {
    this.list.push(...problems);
  }

  /** Runs `step`; when it throws ConfigError its problems are recorded and undefined returned. */
  guard<T>(step: () => T): T | undefined {
    try {
      return step();
    } catch (error) {
      if (!(error instanceof ConfigError)) throw error;
      this.list.push(...error.problems);
      return undefined;
    }
  }

  get size(): number {
    return this.list.length;
  }

  /** @throws ConfigError with every problem recorded, when there is one. */
  throwIfAny(): void {
    if (this.list.length > 0) throw ConfigError.of(this.list);
  }
}
