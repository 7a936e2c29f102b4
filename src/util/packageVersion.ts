import { readFileSync } from 'node:fs';

/**
 * The version in package.json, two folders up from this file both in src/util (tests, tsx) and in
 * dist/util (the installed program).
 */
export function packageVersion(): string {
  // Read once: every build of a site's outputs names it in its round digests.
  version ??= (JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string })
    .version;
  return version;
}

let version: string | undefined;
