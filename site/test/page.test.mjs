// Browser tests of the single-file page in Debian's Chromium (headless),
// opened straight from disk. Run by `make test-web` after `make site`.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { mkdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { launch, open, waitReady, afterEvaluation, dist, singleURL } from './browser.mjs';
import { parseSI } from '../src/si.js';

let b;
let page;
const shots = join(dist, 'screenshots');

before(async () => {
  mkdirSync(shots, { recursive: true });
  b = await launch();
  await b.context.setOffline(true); // the single file must need no network at all
  page = b.context.pages()[0] || (await b.context.newPage());
});

after(async () => {
  if (b) await b.close();
});

const evaluations = () => page.evaluate(() => Number(document.body.dataset.evaluations || 0));
const gainText = () => page.textContent('#card-gain .card-value');
const plotPixels = async () => (await page.locator('#plot-ac canvas').screenshot()).toString('base64');

test('opens from disk offline and draws the first plot', async (t) => {
  const t0 = Date.now();
  await open(page);
  const wall = Date.now() - t0;
  const firstPlot = Number(await page.evaluate(() => document.body.dataset.firstPlotMs));
  const engine = Number(await page.evaluate(() => document.body.dataset.engineMs));
  t.diagnostic(`open to first plot: ${firstPlot} ms after navigation start (engine start ${engine} ms; wall clock ${wall} ms)`);
  assert.ok(firstPlot > 0, 'no first-plot time recorded');
  assert.match(await gainText(), /V\/V/);
  assert.equal(await page.locator('#plot-ac canvas').count(), 1);
  assert.equal(await page.locator('#plot-noise canvas').count(), 1);
  assert.ok((await page.locator('#roots li').count()) >= 1, 'no poles listed');
  await page.screenshot({ path: join(shots, 'page-1280x800.png') });
  await page.screenshot({ path: join(shots, 'page-1280-full.png'), fullPage: true });
});

test('arrow keys on a slider change the gain, the plot and the link', async () => {
  // 20 µA through 10 kΩ leaves M1 saturated as RD grows by the 10 steps.
  await open(page, 'v=1&stage=cs&load=r&rd=10k&id=20u');
  const gain0 = await gainText();
  const pixels0 = await plotPixels();
  const hash0 = await page.evaluate(() => location.hash);
  const n0 = await evaluations();
  const history0 = await page.evaluate(() => history.length);
  const slider = page.locator('#k-rd-slider');
  await slider.focus();
  await afterEvaluation(page, async () => {
    for (let i = 0; i < 10; i++) await page.keyboard.press('ArrowRight');
  });
  assert.ok((await evaluations()) > n0);
  const gain1 = await gainText();
  assert.notEqual(gain1, gain0, 'gain did not change');
  assert.notEqual(await plotPixels(), pixels0, 'plot did not change');
  const hash1 = await page.evaluate(() => location.hash);
  assert.notEqual(hash1, hash0);
  assert.match(hash1, /rd=/);
  // A larger drain resistor gives more gain in a resistor-loaded cs stage (common practice: |A| ≈ gm·(RD‖ro)).
  const mag = (s) => Math.abs(parseSI(s.replace(/[−]/g, '-').replace(/\s|V\/V/g, '')).value);
  assert.ok(mag(gain1) > mag(gain0), `|gain| ${gain1} not above ${gain0}`);
  // History has one entry however many moves (replaceState only).
  assert.equal(await page.evaluate(() => history.length), history0);
});

test('a slider step patches the result tables in place and writes the link once the slider pauses', async () => {
  await open(page, 'v=1&stage=cs&load=r&rd=10k&id=20u');
  // Tag the live nodes: a step must keep them (patched text), not rebuild them.
  await page.evaluate(() => {
    for (const sel of ['#op table', '#smallsignal table', '#card-gain', '#estimates table', '#roots li']) document.querySelector(sel).swKept = sel;
  });
  const before = await page.evaluate(() => ({ op: document.querySelector('#op table').textContent, hash: location.hash }));
  await page.locator('#k-rd-slider').focus();
  const n0 = await evaluations();
  await page.keyboard.press('ArrowRight');
  // The tables are filled in a task after the plots' frame; data-state is
  // 'ready' once they are.
  await page.waitForFunction((n) => Number(document.body.dataset.evaluations) > n && document.body.dataset.busy !== 'true' && document.body.dataset.state === 'ready', n0);
  const after = await page.evaluate(() => ({
    kept: ['#op table', '#smallsignal table', '#card-gain', '#estimates table', '#roots li'].filter((sel) => document.querySelector(sel).swKept === sel),
    op: document.querySelector('#op table').textContent,
    evaluations: Number(document.body.dataset.evaluations),
  }));
  assert.deepEqual(after.kept, ['#op table', '#smallsignal table', '#card-gain', '#estimates table', '#roots li'], 'a slider step rebuilt these');
  assert.notEqual(after.op, before.op, 'the operating-point table did not change with RD');
  // One key press fires input and change with the same value: one evaluation.
  await page.waitForTimeout(100);
  assert.equal(await evaluations(), n0 + 1, 'one key press evaluated more than once');
  // The link follows once the slider pauses (LINK_SETTLE_MS in main.js).
  await page.waitForFunction(() => document.body.dataset.linkPending === 'false', null, { timeout: 5000 });
  const hash = await page.evaluate(() => location.hash.slice(1));
  assert.notEqual(`#${hash}`, before.hash);
  assert.equal(hash, await page.evaluate(() => window.stagewrightPage.canonical()));
});

test('an edit made while an older result is drawn keeps the newer edits (no stale values from that result)', async () => {
  await open(page, 'v=1&stage=cs&load=r&rd=10k&id=20u');
  // Twelve moves of the rsig slider at once: the engine computes the first
  // and queues the last. The moment the first one's result is drawn (the
  // last still computing), the cl slider moves: that edit must carry the
  // twelfth rsig value, not the first result's.
  const wanted = await page.evaluate(
    () =>
      new Promise((resolve) => {
        const rsig = document.getElementById('k-rsig-slider');
        const cl = document.getElementById('k-cl-slider');
        const n0 = Number(document.body.dataset.evaluations);
        const seen = new MutationObserver(() => {
          if (Number(document.body.dataset.evaluations) !== n0 + 1) return;
          seen.disconnect();
          cl.value = String(Number(cl.value) + 1);
          cl.dispatchEvent(new Event('input', { bubbles: true }));
          resolve(last);
        });
        seen.observe(document.body, { attributes: true, attributeFilter: ['data-evaluations'] });
        let last = '';
        for (let i = 0; i < 12; i++) {
          rsig.value = String(Number(rsig.value) + 1);
          rsig.dispatchEvent(new Event('input', { bubbles: true }));
          last = document.getElementById('k-rsig').value; // the slider's input handler writes its value here
        }
      }),
  );
  await page.waitForFunction(() => document.body.dataset.busy !== 'true' && document.body.dataset.state === 'ready');
  const design = await page.evaluate(() => window.stagewrightPage.canonical());
  const rsig = /(?:^|&)rsig=([^&]*)/.exec(design)[1];
  assert.equal(parseSI(rsig).value, parseSI(wanted).value, `the twelfth move set rsig to ${wanted}; the design holds rsig=${rsig}`);
  assert.equal(parseSI(await page.inputValue('#k-rsig')).value, parseSI(wanted).value, 'the rsig field does not show the design');
});

test('typing SI values in a field, and rejecting nonsense', async () => {
  await open(page, 'v=1&stage=cs&load=r');
  const field = page.locator('#k-rd');
  await field.fill('4.7k');
  await afterEvaluation(page, () => field.press('Enter'));
  assert.ok((await page.evaluate(() => location.hash)).includes('rd=4.7k'));
  await field.fill('banana');
  await field.press('Enter');
  const msg = await page.textContent('#k-rd-msg');
  assert.match(msg, /not a number/);
  assert.match(msg, /keeping 4\.7k/);
  assert.ok((await page.evaluate(() => location.hash)).includes('rd=4.7k'), 'bad text changed the design');
  await field.fill('-5');
  await field.press('Enter');
  assert.match(await page.textContent('#k-rd-msg'), /must be/);
  await page.locator('#k-w').fill('12µ');
  await afterEvaluation(page, () => page.locator('#k-w').press('Enter'));
  assert.ok((await page.evaluate(() => location.hash)).includes('w=12u'), 'µ not read as micro');
});

test('a fragment survives a reload and every control shows it', async () => {
  const given = [
    ['stage', 'cg'], ['pol', 'p'], ['proc', 'd65'], ['vdd', '1.1'], ['temp', '85'], ['w', '12u'], ['l', '300n'],
    ['bias', 'id'], ['id', '47u'], ['vg', '450m'], ['load', 'r'], ['rd', '4.7k'], ['rsig', '220'], ['rl', '47k'],
    ['cl', '220f'], ['fmin', '10'], ['fmax', '10G'], ['ppd', '20'], ['nlo', '10'], ['nhi', '10M'],
  ];
  const fragment = 'v=1&' + given.map(([k, v]) => `${k}=${v}`).join('&');
  await page.goto('about:blank');
  await open(page, fragment);
  await page.reload();
  await waitReady(page, 0);
  assert.equal(await page.isHidden('#notice'), true, `unexpected notice: ${await page.textContent('#notice')}`);
  for (const [key, value] of given) {
    if (['stage', 'pol', 'load', 'bias'].includes(key)) {
      assert.equal(await page.isChecked(`#pick-${key}-${value}`), true, `${key} picker does not show ${value}`);
    } else if (key === 'proc') {
      assert.equal(await page.inputValue('#k-proc'), value);
    } else {
      const shown = await page.inputValue(`#k-${key}`);
      assert.equal(parseSI(shown).value, parseSI(value).value, `${key}: field shows ${shown}, fragment says ${value}`);
      assert.equal(await page.isVisible(`#k-${key}`), true, `${key} is hidden`);
    }
  }
  const canonical = await page.evaluate(() => window.stagewrightPage.canonical());
  for (const [key, value] of given) {
    assert.ok(canonical.split('&').some((p) => p.split('=')[0] === key && parseSI(p.split('=')[1]).value === parseSI(value).value || p === `${key}=${value}`), `${key}=${value} not in ${canonical}`);
  }
  // The p-type common-gate schematic is drawn.
  assert.match(await page.textContent('#schematic title'), /p-type common-gate/);
  await page.screenshot({ path: join(shots, 'page-cg-p-1280x800.png') });
});

const MALFORMED = [
  ['w=-3u', ['w']],
  ['wdth=1u', ['wdth']],
  ['stage=xx', ['stage']],
  ['v=3', ['v']],
  ['=5', []],
  ['w', ['w']],
  ['w=1u&w=2u', ['w']],
  ['id=abc', ['id']],
  ['l=%ZZ', ['l']],
  ['stage=sf&load=diode', ['load']],
  ['stage=sf&load=r&rs=0', ['rs']],
  ['fmin=1G&fmax=1k', ['fmax']],
  ['nlo=1G&nhi=1', ['nhi']],
  ['ppd=200&fmin=1m&fmax=1T', ['ppd']],
  ['vin=9&bias=vin', ['vin']],
  ['=1&=2', []],
  ['w=1u<script>alert(1)</script>', ['w']],
  ['rl=-inf&cl=1F', ['rl', 'cl']],
  ['n.vt0=99&p.zz=1', ['n.vt0', 'p.zz']],
  ['x'.repeat(5000), []],
];

test('20 malformed fragments: a visible message naming the bad keys, no page errors', async () => {
  await open(page);
  const scripts0 = await page.locator('script').count();
  let i = 0;
  for (const [fragment, keys] of MALFORMED) {
    const n0 = await evaluations();
    const byHand = i++ % 2 === 0;
    if (byHand) {
      await page.evaluate((f) => {
        location.hash = f;
      }, fragment); // edited by hand: hashchange
    } else {
      await page.goto('about:blank');
      await page.goto(`${singleURL}#${fragment}`);
    }
    await waitReady(page, byHand ? n0 : 0);
    const notice = page.locator('#notice');
    assert.equal(await notice.isVisible(), true, `no message for ${fragment.slice(0, 40)}`);
    const text = await notice.textContent();
    for (const k of keys) assert.ok(text.includes(k), `message for ${fragment.slice(0, 40)} does not name ${k}: ${text}`);
    assert.match(text, /problem/);
    if (fragment.length < 200) {
      const given = await page.textContent('#notice .given');
      assert.ok(given.length > 0, 'the link as given is not shown');
    }
    // The rest of the page still works: there is a result or a stated reason.
    assert.match(await page.textContent('#status'), /Computed|No operating point|No result/);
  }
  assert.equal(await page.locator('script').count(), scripts0, 'a script element appeared');
  await page.evaluate(() => {
    location.hash = 'w=-3u&rd=22k';
  });
  await page.waitForFunction(() => document.querySelector('#notice .given')?.textContent.includes('w=-3u'));
  assert.equal(await page.inputValue('#k-rd'), '22k', 'good key of a partly bad link not applied');
  await page.screenshot({ path: join(shots, 'page-bad-link-1280x800.png') });
  assert.deepEqual(b.errors, [], 'page errors');
});

test('downloads: CSV, JSON and PNG made in the page', async () => {
  await open(page);
  const grab = async (id) => {
    const [d] = await Promise.all([page.waitForEvent('download'), page.click(id)]);
    return readFileSync(await d.path());
  };
  const csv = (await grab('#export-csv')).toString();
  assert.match(csv.split('\n')[1], /^f_hz,mag_db,phase_deg/);
  assert.ok(csv.split('\n').length > 100, 'sweep CSV too short');
  const json = JSON.parse((await grab('#export-json')).toString());
  assert.equal(json.ok, true);
  assert.ok(Array.isArray(json.ac.f));
  for (const id of ['#png-ac', '#png-noise', '#png-splane']) {
    const png = await grab(id);
    assert.equal(png.subarray(1, 4).toString(), 'PNG', `${id} did not give a PNG`);
  }
  await page.click('#copy-link');
  await page.waitForFunction(() => document.getElementById('copy-out').textContent.length > 0);
});

test('readable at 390 px wide, no sideways scrolling', async () => {
  await page.setViewportSize({ width: 390, height: 844 });
  await open(page);
  const width = await page.evaluate(() => document.documentElement.scrollWidth);
  assert.ok(width <= 390, `page is ${width} px wide at a 390 px viewport`);
  await page.screenshot({ path: join(shots, 'page-390-full.png'), fullPage: true });
  await page.screenshot({ path: join(shots, 'page-390x844.png') });
  await page.setViewportSize({ width: 1280, height: 800 });
});

test('keyboard: every control has a label and focus is visible', async () => {
  await open(page);
  const unlabeled = await page.evaluate(() =>
    [...document.querySelectorAll('input, select, button')]
      .filter((e) => e.type !== 'hidden')
      .filter((e) => !(e.labels && e.labels.length) && !e.getAttribute('aria-label') && !e.textContent.trim())
      .map((e) => e.id || `${e.localName}.${e.className}`),
  );
  assert.deepEqual(unlabeled, []);
  await page.keyboard.press('Tab');
  const outline = await page.evaluate(() => getComputedStyle(document.activeElement).outlineStyle);
  assert.notEqual(outline, 'none', 'no visible focus outline');
});

test('no request leaves the page’s own file, no CSP or console errors', async () => {
  const foreign = b.requests.filter((u) => !(u.startsWith(singleURL) || u.startsWith('blob:') || u.startsWith('data:') || u === 'about:blank'));
  assert.deepEqual(foreign, []);
  assert.ok(b.requests.some((u) => u.startsWith(singleURL)));
  assert.deepEqual(b.consoleErrors, []);
  assert.deepEqual(b.errors, []);
});
