import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import { REJECTION_CODES } from '../../src/ingest/errors.js';

describe('refusal codes in the README', () => {
  it('lists exactly the codes the ingest can give, so the documentation cannot drift from src/ingest/errors.ts', () => {
    const readme = fs.readFileSync(new URL('../../README.md', import.meta.url), 'utf8');
    const section = readme.slice(readme.indexOf('### What happens to bad input'), readme.indexOf('## Outputs'));
    const documented = [...section.matchAll(/^\| (`[a-z-]+`(?:, `[a-z-]+`)*) \|/gm)].flatMap((match) =>
      [...match[1]!.matchAll(/`([a-z-]+)`/g)].map((code) => code[1]!),
    );
    expect(documented.sort()).toEqual(Object.keys(REJECTION_CODES).sort());
  });
});
