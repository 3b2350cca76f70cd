// A page bundle and an engine from different builds must refuse to run,
// loudly: the page is rebuilt here with another version string.
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, dirname } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { launch } from './browser.mjs';

const here = dirname(fileURLToPath(import.meta.url));

test('a version mismatch between page and engine stops the page with a message', async () => {
  const out = mkdtempSync(join(tmpdir(), 'stagewright-mismatch-'));
  const b = await launch();
  try {
    execFileSync(process.execPath, [join(here, '..', 'build.mjs')], {
      env: { ...process.env, STAGEWRIGHT_DIST: out, STAGEWRIGHT_VERSION: 'not-the-engine-version' },
      stdio: 'ignore',
    });
    const page = b.context.pages()[0] || (await b.context.newPage());
    await page.goto(pathToFileURL(join(out, 'stagewright.html')).href);
    await page.waitForFunction(() => document.body.dataset.state === 'failed', null, { timeout: 30000 });
    assert.match(await page.textContent('#status'), /version mismatch: page not-the-engine-version, engine /);
  } finally {
    await b.close();
    rmSync(out, { recursive: true, force: true });
  }
});
