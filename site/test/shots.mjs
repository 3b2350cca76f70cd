// Screenshots of the page at 390, 768 and 1280 px with every aid run, and of
// the "Your process" panel with a fit of the demo file (not a test:
// `node test/shots.mjs [--process-only] [fragment]` writes them to
// dist/screenshots/; --process-only skips the aids and the whole page).
import { mkdirSync } from 'node:fs';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { launch, open, dist } from './browser.mjs';

const args = process.argv.slice(2);
const processOnly = args.includes('--process-only');
const fragment = args.find((a) => !a.startsWith('--')) || 'v=1&proc=d180&cl=1p&t.gain=20&t.f3db=20M&t.idd=200u';
const demoN = join(dirname(fileURLToPath(import.meta.url)), '..', '..', 'testdata', 'chardata', 'demo_n.csv');
const out = join(dist, 'screenshots');
mkdirSync(out, { recursive: true });
const b = await launch();
await b.context.setOffline(true);
const page = b.context.pages()[0] || (await b.context.newPage());
try {
  for (const width of [390, 768, 1280]) {
    await page.setViewportSize({ width, height: 900 });
    await open(page, fragment);
    // the process panel first: a fit of the demo file, shot on its own
    await page.setInputFiles('#proc-file', demoN);
    await page.waitForFunction(() => document.body.dataset.procFile, null, { timeout: 10000 });
    await page.click('#proc-fit');
    await page.waitForFunction(() => document.body.dataset.fitState && document.body.dataset.fitState !== 'running', null, { timeout: 120000 });
    await page.locator('#proc').screenshot({ path: join(out, `process-${width}.png`) });
    // and in pieces of 1000 px, for a viewer that scales a tall picture down
    const box = await page.locator('#proc').boundingBox();
    const top = box.y + (await page.evaluate(() => scrollY));
    for (let y = 0, i = 0; y < box.height; y += 1000, i++) {
      await page.screenshot({ path: join(out, `process-${width}-${i}.png`), fullPage: true, clip: { x: 0, y: top + y, width, height: Math.min(1000, box.height - y) } });
    }
    const pw = await page.evaluate(() => [document.documentElement.scrollWidth, innerWidth]);
    console.log(`${width}px with the process panel: document ${pw[0]} px wide in a ${pw[1]} px window`);
    if (processOnly) continue;
    await page.waitForFunction(() => document.body.dataset.aids === 'ready', null, { timeout: 60000 });
    await page.click('#mc-run');
    await page.waitForFunction(() => document.body.dataset.mcState && document.body.dataset.mcState !== 'running', null, { timeout: 120000 });
    await page.click('#size-search');
    await page.waitForFunction(() => document.body.dataset.sizeState && document.body.dataset.sizeState !== 'running', null, { timeout: 120000 });
    const sw = await page.evaluate(() => [document.documentElement.scrollWidth, innerWidth]);
    console.log(`${width}px: document ${sw[0]} px wide in a ${sw[1]} px window`);
    await page.screenshot({ path: join(out, `shot-${width}.png`), fullPage: true });
    // and in pieces of two windows' height, for a viewer that scales a tall picture down
    const height = await page.evaluate(() => document.documentElement.scrollHeight);
    for (let y = 0, i = 0; y < height; y += 1800, i++) {
      await page.screenshot({ path: join(out, `shot-${width}-${i}.png`), fullPage: true, clip: { x: 0, y, width, height: Math.min(1800, height - y) } });
    }
  }
} finally {
  await b.close();
}
