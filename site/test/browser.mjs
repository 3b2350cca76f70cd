// Shared setup of the browser tests: Debian's Chromium driven by
// playwright-core (no browser download), a fresh profile per launch, and a
// record of every request and page error.
import { chromium } from 'playwright-core';
import { mkdtempSync, rmSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, dirname } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

const here = dirname(fileURLToPath(import.meta.url));
export const dist = join(here, '..', 'dist');
export const singleFile = join(dist, 'stagewright.html');
export const singleURL = pathToFileURL(singleFile).href;
export const executablePath = process.env.CHROMIUM || '/usr/bin/chromium';

export async function launch() {
  if (!existsSync(executablePath)) throw new Error(`${executablePath} not found: install Debian's chromium`);
  if (!existsSync(singleFile)) throw new Error(`${singleFile} not built: run make site`);
  const profile = mkdtempSync(join(tmpdir(), 'stagewright-chromium-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath,
    headless: true,
    args: [
      '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync',
    ],
    viewport: { width: 1280, height: 800 },
  });
  const requests = [];
  const errors = [];
  const consoleErrors = [];
  context.on('request', (r) => requests.push(r.url()));
  const watch = (page) => {
    page.on('pageerror', (e) => errors.push(String(e)));
    page.on('console', (m) => {
      if (m.type() === 'error') consoleErrors.push(m.text());
    });
  };
  context.on('page', watch);
  for (const p of context.pages()) watch(p);
  const close = async () => {
    await context.close();
    rmSync(profile, { recursive: true, force: true });
  };
  return { context, requests, errors, consoleErrors, close };
}

/** Opens the single file with a fragment and waits for the first result. */
export async function open(page, fragment = '') {
  // A new document each time: going to the same file with another hash would
  // only change the hash and leave the old result on the page.
  await page.goto('about:blank');
  await page.goto(singleURL + (fragment ? `#${fragment}` : ''));
  await waitReady(page);
}

export async function waitReady(page, previous = 0) {
  await page.waitForFunction(
    (prev) => {
      const s = document.body.dataset.state;
      return s === 'failed' || ((s === 'ready' || s === 'no-result') && Number(document.body.dataset.evaluations || 0) > prev);
    },
    previous,
    { timeout: 30000 },
  );
  const state = await page.evaluate(() => document.body.dataset.state);
  if (state === 'failed') throw new Error(`engine failed: ${await page.textContent('#status')}`);
}

/** Runs action and waits until the page has shown at least one newer evaluation. */
export async function afterEvaluation(page, action) {
  const n0 = await page.evaluate(() => Number(document.body.dataset.evaluations || 0));
  await action();
  await waitReady(page, n0);
  // Coalesced requests: wait until the engine is idle with nothing queued,
  // and until a slider's link write (made once the slider pauses) is done.
  await page.waitForFunction(() => document.body.dataset.busy !== 'true' && document.body.dataset.linkPending !== 'true');
}
