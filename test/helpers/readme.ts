/**
 * The README's code snippets, for the tests that run them: a snippet is found under its section
 * heading, then its sub-heading, by the language tag of its fence.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const README = fs.readFileSync(path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../README.md'), 'utf8');

/** The text under `heading` (a whole line, `## ...` or `### ...`), up to the next heading of its level or higher. */
export function readmeSection(heading: string, within: string = README): string {
  const start = within.indexOf(`\n${heading}\n`);
  if (start < 0) throw new Error(`README has no heading "${heading}"`);
  const level = /^#+/.exec(heading)![0].length;
  const body = within.slice(start + heading.length + 2);
  const next = new RegExp(`^#{1,${level}} `, 'm').exec(body);
  return next === null ? body : body.slice(0, next.index);
}

/** The `index`-th fenced block tagged `language` in `section`. */
export function readmeSnippet(section: string, language: string, index = 0): string {
  const blocks = [...section.matchAll(new RegExp(`\`\`\`${language}\\n([\\s\\S]*?)\`\`\``, 'g'))];
  const block = blocks[index];
  if (block === undefined) throw new Error(`no \`\`\`${language} block number ${index + 1} there`);
  return block[1]!;
}
