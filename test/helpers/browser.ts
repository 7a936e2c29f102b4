/**
 * Helpers for the page tests: run the demo into a temp folder, rewrite its outputs (after an
 * optional config edit), and launch a headless Chromium through playwright-core: Debian's
 * (`/usr/bin/chromium`) when it is there, otherwise the one the dev dependency
 * `@sparticuz/chromium` carries inside its package (Linux x64). `ROPEWATCH_CHROMIUM=bundled`
 * forces the packaged one, `ROPEWATCH_CHROMIUM=system` Debian's.
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import { fileURLToPath } from 'node:url';
import zlib from 'node:zlib';
import { chromium, type BrowserContext } from 'playwright-core';
import type { CliIo } from '../../src/cli/io.js';
import { runDemo } from '../../src/demo/runDemo.js';
import { DEMO_TODAY } from '../../src/demo/scenario.js';
import { regenerateSite, type SiteAnalysis } from '../../src/outputs.js';
import { openWorkspace, type WorkspacePaths } from '../../src/workspace.js';
import { sqlitePaths } from './workspace.js';

export const SYSTEM_CHROMIUM = '/usr/bin/chromium';

/**
 * Enough for both browsers, as root, on a machine without network. The packaged build's own
 * `args` add `--single-process` and WebGL through SwiftShader, which these pages do not need:
 * with these flags alone it starts in its usual multi-process mode.
 */
export const CHROMIUM_ARGS = [
  '--headless',
  '--no-sandbox',
  '--disable-gpu',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
];

const REPO_ROOT = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..', '..');
const PACKAGE_DIR = path.join(REPO_ROOT, 'node_modules', '@sparticuz', 'chromium');
/** Where the packaged browser is unpacked: once per package version, reused by later runs. */
export const BUNDLED_CACHE = path.join(REPO_ROOT, 'node_modules', '.cache', 'ropewatch-chromium');

export type ChromiumChoice = { kind: 'system'; executablePath: string } | { kind: 'bundled' };

/**
 * Which browser to drive. `ROPEWATCH_CHROMIUM` unset: Debian's when its executable is there, else
 * the packaged one; `bundled` or `system` force one. Anything else, or `system` with no system
 * browser, is an error (a browser run never turns into a skip).
 */
export function chooseChromium(
  env: Readonly<Record<string, string | undefined>>,
  systemPresent: (file: string) => boolean,
): ChromiumChoice {
  const wanted = env.ROPEWATCH_CHROMIUM ?? '';
  if (wanted === 'bundled') return { kind: 'bundled' };
  if (wanted === 'system') {
    if (!systemPresent(SYSTEM_CHROMIUM))
      throw new Error(
        `ROPEWATCH_CHROMIUM=system, but ${SYSTEM_CHROMIUM} is not there (apt-get install chromium, or ROPEWATCH_CHROMIUM=bundled)`,
      );
    return { kind: 'system', executablePath: SYSTEM_CHROMIUM };
  }
  if (wanted !== '')
    throw new Error(`ROPEWATCH_CHROMIUM must be "bundled", "system" or unset, got ${JSON.stringify(wanted)}`);
  return systemPresent(SYSTEM_CHROMIUM) ? { kind: 'system', executablePath: SYSTEM_CHROMIUM } : { kind: 'bundled' };
}

export function isExecutable(file: string): boolean {
  try {
    fs.accessSync(file, fs.constants.X_OK);
    return fs.statSync(file).isFile();
  } catch {
    return false;
  }
}

export interface BundledChromium {
  executablePath: string;
  /** A fontconfig file naming only the fonts the package carries, so text is drawn alike on every machine. */
  fontconfigFile: string;
}

function escapeXml(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;');
}

/** A fontconfig file naming only the fonts unpacked under `home` (a real path, no symbolic link in it). */
function fontconfigText(home: string): string {
  return [
    '<?xml version="1.0"?>',
    '<!DOCTYPE fontconfig SYSTEM "fonts.dtd">',
    '<fontconfig>',
    `  <dir>${escapeXml(path.join(home, 'fonts'))}</dir>`,
    `  <cachedir>${escapeXml(path.join(home, 'fontconfig-cache'))}</cachedir>`,
    '</fontconfig>',
    '',
  ].join('\n');
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (error) {
    return (error as NodeJS.ErrnoException).code === 'EPERM';
  }
}

/**
 * Unpacks the packaged Chromium (brotli-compressed binary and fonts inside `@sparticuz/chromium`)
 * into `<cacheRoot>/<version>/`, or finds it there. The folder is filled under a name of its own
 * and renamed into place whole, so a run that was killed halfway, or two runs at once, never
 * leave a cut-off binary behind where the next run looks. (The package's own `executablePath()`
 * writes straight to a fixed `/tmp/chromium` and takes any file there as finished.)
 */
export async function unpackBundledChromium(
  cacheRoot = BUNDLED_CACHE,
  packageDir = PACKAGE_DIR,
): Promise<BundledChromium> {
  if (process.platform !== 'linux' || process.arch !== 'x64') {
    throw new Error(
      `the packaged Chromium runs on Linux x64 only (this is ${process.platform} ${process.arch}); install a Chromium at ${SYSTEM_CHROMIUM}`,
    );
  }
  const manifest = path.join(packageDir, 'package.json');
  if (!fs.existsSync(manifest))
    throw new Error(
      `${packageDir} is missing: run npm ci (the dev dependency @sparticuz/chromium carries the browser)`,
    );
  const version = (JSON.parse(fs.readFileSync(manifest, 'utf8')) as { version: string }).version;
  const home = path.join(cacheRoot, version);
  const found: BundledChromium = {
    executablePath: path.join(home, 'chromium'),
    fontconfigFile: path.join(home, 'fonts.conf'),
  };
  if (fs.existsSync(home)) {
    // The cache may sit behind a symbolic link (node_modules shared by several checkouts): a
    // fontconfig file naming a folder that is gone draws no text at all, so it is written again,
    // under a name of its own and renamed into place.
    const conf = fs.readFileSync(found.fontconfigFile, 'utf8');
    const fontsDir = /<dir>([^<]*)<\/dir>/.exec(conf)?.[1];
    if (
      fontsDir === undefined ||
      !fs.existsSync(fontsDir.replace(/&lt;/g, '<').replace(/&gt;/g, '>').replace(/&amp;/g, '&'))
    ) {
      const temporary = `${found.fontconfigFile}.${process.pid}`;
      fs.writeFileSync(temporary, fontconfigText(fs.realpathSync(home)));
      fs.renameSync(temporary, found.fontconfigFile);
    }
    return found;
  }

  fs.mkdirSync(cacheRoot, { recursive: true });
  // Leftovers of runs that were killed while unpacking (their process is gone).
  for (const entry of fs.readdirSync(cacheRoot)) {
    const match = /\.partial-(\d+)$/.exec(entry);
    if (match && !alive(Number(match[1]))) fs.rmSync(path.join(cacheRoot, entry), { recursive: true, force: true });
  }
  const partial = `${home}.partial-${process.pid}`;
  fs.rmSync(partial, { recursive: true, force: true });
  fs.mkdirSync(path.join(partial, 'fonts'), { recursive: true });
  await pipeline(
    fs.createReadStream(path.join(packageDir, 'bin', 'chromium.br')),
    zlib.createBrotliDecompress(),
    fs.createWriteStream(path.join(partial, 'chromium'), { mode: 0o755 }),
  );
  // fonts.tar.br holds fonts/Open_Sans/*.ttf and a fonts.conf for the package's own paths; ours names this folder.
  execFileSync('tar', ['-x', '-f', '-', '-C', path.join(partial, 'fonts')], {
    input: zlib.brotliDecompressSync(fs.readFileSync(path.join(packageDir, 'bin', 'fonts.tar.br'))),
  });
  fs.writeFileSync(path.join(partial, 'fonts.conf'), fontconfigText(path.join(fs.realpathSync(cacheRoot), version)));
  try {
    fs.renameSync(partial, home);
  } catch (error) {
    // Another run put its copy in place first: use that one.
    fs.rmSync(partial, { recursive: true, force: true });
    if (!fs.existsSync(home)) throw error;
  }
  return found;
}

export interface LaunchedChromium {
  context: BrowserContext;
  /** Which browser, for the test's name and messages: "system /usr/bin/chromium 143.0..." */
  description: string;
}

/**
 * Starts the chosen browser with a user-data folder of our own (launchPersistentContext is how
 * playwright takes one).
 */
export async function launchChromium(
  userDataDir: string,
  options: { viewport?: { width: number; height: number }; env?: Readonly<Record<string, string | undefined>> } = {},
): Promise<LaunchedChromium> {
  const choice = chooseChromium(options.env ?? process.env, isExecutable);
  let executablePath: string;
  let env: Record<string, string | undefined> = { ...process.env };
  if (choice.kind === 'system') {
    executablePath = choice.executablePath;
  } else {
    const bundled = await unpackBundledChromium();
    executablePath = bundled.executablePath;
    env = { ...env, FONTCONFIG_FILE: bundled.fontconfigFile };
  }
  const context = await chromium.launchPersistentContext(userDataDir, {
    executablePath,
    args: CHROMIUM_ARGS,
    headless: true,
    env,
    ...(options.viewport ? { viewport: options.viewport } : {}),
  });
  return { context, description: `${choice.kind} ${executablePath} ${context.browser()?.version() ?? ''}`.trim() };
}

export interface DemoPages {
  root: string;
  paths: WorkspacePaths;
  analyses: SiteAnalysis[];
  cleanup: () => void;
}

function collectingIo(root: string): CliIo {
  return { stdout: () => {}, stderr: () => {}, cwd: root, now: () => new Date(DEMO_TODAY), env: {} };
}

/**
 * Runs the demo into a fresh temp folder, then re-analyses every site from the demo store with
 * `configDir` (default: the demo's own config; pass a modified copy to test e.g. notifiable
 * assays) and writes the pages and the index into `outbox`.
 */
export async function buildDemoPages(options: { editConfig?: (configDir: string) => void } = {}): Promise<DemoPages> {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-pages-'));
  const paths: WorkspacePaths = sqlitePaths(root);
  await runDemo(collectingIo(root), paths, false);
  options.editConfig?.(paths.configDir);
  const ws = openWorkspace(
    paths,
    () => new Date(DEMO_TODAY),
    () => {},
  );
  let analyses: SiteAnalysis[];
  try {
    // Every site's outputs, pages and the index, as `report` writes them, with each site's analysis.
    analyses = ws.config.sites.map((site) => regenerateSite(ws, site, { full: true }));
  } finally {
    ws.close();
  }
  return { root, paths, analyses, cleanup: () => fs.rmSync(root, { recursive: true, force: true }) };
}
