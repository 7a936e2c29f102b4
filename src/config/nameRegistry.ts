import { matchKey } from './names.js';
import type { ProblemList } from './problems.js';

/**
 * Refuses the second of two names that the code would take for the same thing (compared as
 * matchKey compares them), at the key path of the second. One owner may repeat its own name
 * (a barn whose name is its id).
 */
export class NameRegistry {
  private readonly seen = new Map<string, { owner: unknown; what: string; value: string; keyPath: string }>();
  constructor(
    private readonly file: string,
    private readonly problems: ProblemList,
  ) {}

  claim(owner: unknown, what: string, value: string, keyPath: string): void {
    const key = matchKey(value);
    const earlier = this.seen.get(key);
    if (earlier === undefined) {
      this.seen.set(key, { owner, what, value, keyPath });
    } else if (earlier.owner !== owner) {
      const detail =
        earlier.value === value && earlier.what === what
          ? `${what} ${value} is used twice (also at ${earlier.keyPath})`
          : `${what} ${JSON.stringify(value)} is the same name as ${earlier.what} ${JSON.stringify(earlier.value)} at ${earlier.keyPath}: names are matched ignoring case and spacing`;
      this.problems.add(this.file, keyPath, detail);
    }
  }
}
