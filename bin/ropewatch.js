#!/usr/bin/env node
// Runs the TypeScript CLI through tsx so `npx ropewatch` works straight after `npm ci`.
import { register } from 'tsx/esm/api';
import { fileURLToPath, pathToFileURL } from 'node:url';
import path from 'node:path';

register();
const here = path.dirname(fileURLToPath(import.meta.url));
const { runFromProcess } = await import(pathToFileURL(path.join(here, '..', 'src', 'cli', 'bin.ts')).href);
await runFromProcess();
