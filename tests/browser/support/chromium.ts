/**
 * Headless Chromium (Debian's /usr/bin/chromium) driven by playwright-core, and a Vite dev server
 * started programmatically (never `npx vite`: killing it leaves its child running).
 * Flags that work with Debian's Chromium under playwright-core (tried here); audio needs no user gesture; getUserMedia gets Chromium's
 * fake input device so live-input code paths run without hardware.
 */
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import type { AddressInfo } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { type BrowserContext, chromium, type Page } from 'playwright-core';
import { createServer, type InlineConfig, type ViteDevServer } from 'vite';
import { afterAll, beforeAll } from 'vitest';
import { REPO_ROOT } from './worklet-build.js';

export const CHROMIUM_PATH = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium';
export const ARTIFACTS = join(REPO_ROOT, 'tests/artifacts');

export interface Browser {
  context: BrowserContext;
  page: Page;
  /** Console errors and page errors seen so far. */
  errors: string[];
  close(): Promise<void>;
}

/** Options of {@link launchChromium}. */
export interface LaunchOptions {
  /**
   * Absolute path of a WAV file that Chromium's fake microphone plays (and loops) to getUserMedia
   * (`--use-file-for-fake-audio-capture`); without it the fake device gives its own beeps.
   */
  fakeAudioCapture?: string;
}

/** Launches one persistent headless Chromium context and opens one page that records errors. */
export async function launchChromium(options: LaunchOptions = {}): Promise<Browser> {
  const dir = mkdtempSync(join(tmpdir(), 'orthotone-chromium-'));
  const context = await chromium.launchPersistentContext(dir, {
    executablePath: CHROMIUM_PATH,
    headless: true,
    viewport: { width: 1280, height: 900 },
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--autoplay-policy=no-user-gesture-required',
      '--use-fake-ui-for-media-stream',
      '--use-fake-device-for-media-stream',
      ...(options.fakeAudioCapture ? [`--use-file-for-fake-audio-capture=${options.fakeAudioCapture}`] : []),
    ],
  });
  const page = context.pages()[0] ?? (await context.newPage());
  const errors: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error') errors.push(m.text());
  });
  page.on('pageerror', (e) => errors.push(`pageerror: ${e.message}`));
  return {
    context,
    page,
    errors,
    async close() {
      await context.close();
      rmSync(dir, { recursive: true, force: true });
    },
  };
}

/** Starts a Vite dev server on 127.0.0.1 (free port) and returns it with its base URL. */
export async function startVite(config: InlineConfig): Promise<{ server: ViteDevServer; url: string }> {
  const server = await createServer({
    logLevel: 'error',
    ...config,
    server: { host: '127.0.0.1', port: 0, strictPort: false, hmr: false, ...config.server },
  });
  await server.listen();
  const addr = server.httpServer?.address() as AddressInfo | null;
  if (!addr) throw new Error('vite did not start listening');
  return { server, url: `http://127.0.0.1:${addr.port}` };
}

/** Makes the artifacts folder (git-ignored) and returns the path of a file in it. */
export function artifactPath(name: string): string {
  mkdirSync(ARTIFACTS, { recursive: true });
  return join(ARTIFACTS, name);
}

/** The demo page served by Vite and one Chromium, opened before a test file's tests and closed after. */
export interface DemoPage {
  /** The browser (valid inside tests, after the file's beforeAll has run). */
  readonly browser: Browser;
  /** Base URL of the demo page, e.g. http://127.0.0.1:5173. */
  readonly base: string;
}

/**
 * Registers beforeAll/afterAll hooks that serve demo/ with Vite and launch Chromium at `viewport`
 * (Chromium's default when omitted), and returns their handles for the tests of the file.
 */
export function useDemoPage(viewport?: { width: number; height: number }): DemoPage {
  let browser: Browser | undefined;
  let vite: ViteDevServer | undefined;
  let base = '';
  beforeAll(async () => {
    const v = await startVite({ configFile: join(REPO_ROOT, 'demo/vite.config.ts') });
    vite = v.server;
    base = v.url;
    browser = await launchChromium();
    if (viewport) await browser.page.setViewportSize(viewport);
  });
  afterAll(async () => {
    await browser?.close();
    await vite?.close();
  });
  return {
    get browser() {
      if (!browser) throw new Error('the demo page is not open: use it inside a test');
      return browser;
    },
    get base() {
      return base;
    },
  };
}
