/**
 * Writes schemas/<name>.v<version>.schema.json for every JSON output from the zod definitions in
 * src/report/schemas (`npm run schemas`), and removes schema files no output has any more.
 * test/report/schemaFiles.test.ts fails while the files differ from what this would write.
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { jsonSchemaText, OUTPUT_SCHEMAS, schemaFileName } from '../src/report/schemas/index.js';

const dir = path.join(path.dirname(fileURLToPath(import.meta.url)), '..', 'schemas');
fs.mkdirSync(dir, { recursive: true });
const wanted = new Set<string>();
for (const entry of OUTPUT_SCHEMAS) {
  const name = schemaFileName(entry.tag);
  wanted.add(name);
  fs.writeFileSync(path.join(dir, name), jsonSchemaText(entry));
}
for (const name of fs.readdirSync(dir)) if (name.endsWith('.schema.json') && !wanted.has(name)) fs.rmSync(path.join(dir, name));
console.log(`wrote ${wanted.size} schemas to ${dir}`);
