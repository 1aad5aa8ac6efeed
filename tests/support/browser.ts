import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { type BrowserContext, chromium } from 'playwright-core';

/**
 * Debian's Chromium, headless, with a fresh profile; nothing downloaded. With `webgl`, WebGL runs in
 * software through SwiftShader (the flags that make deck.gl draw headless on a machine without a GPU).
 */
export async function launchBrowser(options: { webgl?: boolean } = {}): Promise<{ newContext: () => Promise<BrowserContext>; close: () => Promise<void> }> {
  const contexts: { context: BrowserContext; dir: string }[] = [];
  return {
    async newContext() {
      const dir = await mkdtemp(path.join(tmpdir(), 'asterism-chromium-'));
      const context = await chromium.launchPersistentContext(dir, {
        executablePath: '/usr/bin/chromium',
        headless: true,
        args: [
          '--no-sandbox',
          '--disable-gpu',
          '--disable-background-networking',
          '--disable-component-update',
          '--disable-sync',
          '--no-first-run',
          '--disable-quic',
          ...(options.webgl ? ['--use-angle=swiftshader', '--enable-unsafe-swiftshader'] : []),
        ],
        viewport: { width: 1400, height: 1000 },
      });
      contexts.push({ context, dir });
      return context;
    },
    async close() {
      for (const { context, dir } of contexts) {
        await context.close();
        await rm(dir, { recursive: true, force: true });
      }
    },
  };
}
