// Screenshots of the page at 390, 768 and 1280 px with every aid run (not a
// test: `node test/shots.mjs [fragment]` writes them to dist/screenshots/).
import { mkdirSync } from 'node:fs';
import { join } from 'node:path';
import { launch, open, dist } from './browser.mjs';

const fragment = process.argv[2] || 'v=1&proc=d180&cl=1p&t.gain=20&t.f3db=20M&t.idd=200u';
const out = join(dist, 'screenshots');
mkdirSync(out, { recursive: true });
const b = await launch();
await b.context.setOffline(true);
const page = b.context.pages()[0] || (await b.context.newPage());
try {
  for (const width of [390, 768, 1280]) {
    await page.setViewportSize({ width, height: 900 });
    await open(page, fragment);
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
