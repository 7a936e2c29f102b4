/**
 * The JSON Schemas shipped in schemas/ are what the zod definitions give today (regenerate with
 * `npm run schemas`), and the file names follow the version tags.
 */
import fs from 'node:fs';
import { describe, expect, it } from 'vitest';
import { jsonSchemaText, OUTPUT_SCHEMAS, schemaFileName } from '../../src/report/schemas/index.js';

const dir = new URL('../../schemas/', import.meta.url);

describe('schemas/', () => {
  it('holds, for every JSON output, the schema its zod definition generates today (npm run schemas)', () => {
    for (const entry of OUTPUT_SCHEMAS) {
      const file = new URL(schemaFileName(entry.tag), dir);
      expect(fs.existsSync(file), `${schemaFileName(entry.tag)} missing: run npm run schemas`).toBe(true);
      expect(fs.readFileSync(file, 'utf8'), `${schemaFileName(entry.tag)} is stale: run npm run schemas`).toBe(
        jsonSchemaText(entry),
      );
    }
  });

  it('holds no schema that no output has', () => {
    const shipped = fs.readdirSync(dir).filter((name) => name.endsWith('.schema.json'));
    expect(shipped.sort()).toEqual(OUTPUT_SCHEMAS.map((entry) => schemaFileName(entry.tag)).sort());
  });

  it('names a schema file after the version tag, and refuses a tag of another form', () => {
    expect(schemaFileName('ropewatch.round-summary/1')).toBe('round-summary.v1.schema.json');
    expect(() => schemaFileName('round-summary')).toThrow(RangeError);
    // Each schema is a draft 2020-12 document (json-schema.org, "JSON Schema: A Media Type for
    // Describing JSON Documents", draft 2020-12) whose title is the tag.
    for (const entry of OUTPUT_SCHEMAS) {
      const document = JSON.parse(jsonSchemaText(entry)) as { $schema: string; title: string };
      expect(document.$schema).toBe('https://json-schema.org/draft/2020-12/schema');
      expect(document.title).toBe(entry.tag);
    }
  });
});
