// `npm run build` (and npm ci's prepare step): compiles src/ to dist/ (tsconfig.build.json) and
// copies beside it the files the compiled program reads that are not TypeScript: the boot files of
// the parse worker and of the PostgreSQL connection's worker, and the demo's configuration. dist/
// is removed first, so nothing of a module that no longer exists is left to be loaded.
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');
const dist = path.join(root, 'dist');

fs.rmSync(dist, { recursive: true, force: true });
execFileSync(
  process.execPath,
  [path.join(root, 'node_modules', 'typescript', 'bin', 'tsc'), '-p', path.join(root, 'tsconfig.build.json')],
  { stdio: 'inherit' },
);
fs.copyFileSync(
  path.join(root, 'src', 'ingest', 'parseWorkerBoot.mjs'),
  path.join(dist, 'ingest', 'parseWorkerBoot.mjs'),
);
fs.copyFileSync(
  path.join(root, 'src', 'store', 'pg', 'syncWorkerBoot.mjs'),
  path.join(dist, 'store', 'pg', 'syncWorkerBoot.mjs'),
);
fs.cpSync(path.join(root, 'src', 'demo', 'config'), path.join(dist, 'demo', 'config'), { recursive: true });
fs.chmodSync(path.join(dist, 'cli', 'bin.js'), 0o755);
// Written last: a dist/ without it is incomplete (test/helpers/compiledCli.ts checks it).
fs.writeFileSync(path.join(dist, 'BUILT'), 'ropewatch: compiled from src/ by scripts/build.mjs\n');
