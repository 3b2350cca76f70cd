// Browser tests of the "Your process" panel (site/src/process/) in the
// single-file page, offline, in Debian's Chromium: the demo characterization
// file (testdata/chardata/demo_n.csv, invented demo data) is loaded through
// the file input and fitted in the aids' worker; the report, the plots, a
// design with the fit, the link reopening it, a bad file named by line and
// column, and the process file's round trip.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { mkdtempSync, readFileSync, writeFileSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { launch, open, afterEvaluation, dist, singleURL } from './browser.mjs';

const here = dirname(fileURLToPath(import.meta.url));
const demoN = join(here, '..', '..', 'testdata', 'chardata', 'demo_n.csv');
const tmp = mkdtempSync(join(tmpdir(), 'stagewright-proc-'));
// A resistor-loaded common-source stage biased by its gate voltage, so that
// the drain current, and not only the gain, depends on the device.
const DESIGN = 'v=2&stage=cs&pol=n&bias=vin&vin=650m&load=r&rd=10k';

let b;
let page;
const bench = {};

before(async () => {
  b = await launch();
  await b.context.setOffline(true);
  page = b.context.pages()[0] || (await b.context.newPage());
});

after(async () => {
  if (b) await b.close();
  mkdirSync(dist, { recursive: true });
  writeFileSync(join(dist, 'process-bench.json'), JSON.stringify(bench, null, 1) + '\n');
});

const data = (k) => page.evaluate((key) => document.body.dataset[key], k);
const figures = () => page.evaluate(() => {
  const r = window.stagewrightPage.result();
  return { gain: r.midband.gain, id: r.op.id, canonical: window.stagewrightPage.canonical(), hash: location.hash.slice(1) };
});

/** Chooses a data file and presses Fit; resolves with the state the fit ended in and the time from click to report. */
async function fit(path) {
  await page.setInputFiles('#proc-file', path);
  await page.waitForFunction(() => document.body.dataset.procFile, null, { timeout: 10000 });
  const t0 = Date.now();
  await page.click('#proc-fit');
  await page.waitForFunction(() => document.body.dataset.fitState && document.body.dataset.fitState !== 'running', null, { timeout: 120000 });
  return { state: await data('fitState'), ms: Date.now() - t0 };
}

/** Clicks a button that loads a design and waits for its evaluation and its link. */
async function designWith(selector) {
  await afterEvaluation(page, () => page.click(selector));
  await page.waitForFunction(() => location.hash.slice(1) === window.stagewrightPage.canonical());
  return figures();
}

let designed; // figures of the design on the fitted process
let savedPath; // the process file saved from the fit

test('fit the demo file: summary, errors per region, findings, plots', async (t) => {
  await open(page, DESIGN);
  const { state, ms } = await fit(demoN);
  assert.equal(state, 'done', await page.textContent('#proc-msg'));
  bench.fit_demo_n_click_to_report_ms = ms;
  bench.fit_demo_n_job_ms = Number(await data('fitMs'));
  t.diagnostic(`demo_n.csv: ${ms} ms from the click to the report (job ${bench.fit_demo_n_job_ms} ms)`);
  // The summary against the file itself: 700 data rows (704 lines less
  // three comment lines and the header), four lengths, width 10 µm.
  const lines = readFileSync(demoN, 'utf8').trim().split('\n').filter((l) => !l.startsWith('#'));
  const summary = await page.textContent('#proc-summary');
  assert.match(summary, new RegExp(`^${lines.length - 1} points read`));
  assert.match(summary, /4 lengths 180\snm, 350\snm, 1(\.00)?\sµm, 4(\.00)?\sµm/); // formatSI puts a thin space before the unit
  assert.match(summary, /width 10(\.0)?\sµm/);
  // Errors per region: every row has a point count and two percentages.
  const rows = await page.$$eval('#proc-error-table tbody tr', (trs) => trs.map((tr) => [...tr.children].map((c) => c.textContent)));
  assert.equal(rows.length, 6);
  for (const [, points, rms, worst] of rows) {
    assert.match(points, /^\d+$/);
    assert.match(rms, /^\d+(\.\d+)? %$/);
    assert.match(worst, /^\d+(\.\d+)? %$/);
    assert.ok(parseFloat(worst) >= parseFloat(rms), `worst ${worst} below rms ${rms}`);
  }
  // The region counts add up: weak + moderate + strong = triode + saturation = all.
  const n = rows.map((r) => Number(r[1]));
  assert.equal(n[1] + n[2] + n[3], n[0]);
  assert.equal(n[4] + n[5], n[0]);
  assert.match(await page.textContent('#proc-overall'), /gm\/ID rms error in saturation \d+(\.\d+)? %; gds in saturation \d+(\.\d+)? %/);
  const findings = await page.$$eval('#proc-findings li', (lis) => lis.map((li) => li.textContent));
  assert.ok(findings.length >= 1 && findings.every((f) => f.length > 20), `findings: ${findings}`);
  for (const id of ['id-log', 'id-lin', 'gmid', 'gds']) assert.equal(await page.locator(`#proc-plot-${id} canvas`).count(), 1, `plot ${id}`);
  assert.ok((await page.locator('#proc-legend-id-log li').count()) >= 2);
  assert.equal(await data('processes'), '1');
});

test('design with it as n-type, then reopen the link: the same figures', async () => {
  await open(page, DESIGN);
  const onBase = await figures();
  // the list survives the reload; Show brings the report back
  await page.click('#proc-items .proc-show');
  designed = await designWith('#proc-design-n');
  assert.match(designed.canonical, /(^|&)proc=d180(&|$)/);
  assert.match(designed.canonical, /(^|&)pol=n(&|$)/);
  assert.match(designed.canonical, /&n\.thresh=/);
  assert.match(designed.canonical, /&n\.thresh@180n=/);
  assert.match(designed.canonical, /(^|&)vin=650m(&|$)/, 'the design kept its own values');
  // The fitted device is not the base's: at the same gate voltage the
  // current differs (by more than the solver's tolerance, 1e-9 relative).
  assert.ok(Math.abs(designed.id / onBase.id - 1) > 1e-3, `ID ${designed.id} on the fit, ${onBase.id} on the base`);
  assert.match(await page.textContent('#card-gain .card-value'), /V\/V/);
  const gainText = await page.textContent('#card-gain .card-value');
  await open(page, designed.hash);
  const again = await figures();
  assert.equal(again.canonical, designed.canonical);
  assert.equal(again.gain, designed.gain);
  assert.equal(again.id, designed.id);
  assert.equal(await page.textContent('#card-gain .card-value'), gainText);
});

test('a bad CSV names the line and the column and keeps the fit shown', async () => {
  await page.click('#proc-items .proc-show');
  const heading = await page.textContent('#proc-shown');
  const lines = readFileSync(demoN, 'utf8').split('\n');
  const cells = lines[13].split(',');
  cells[2] = '1.2x'; // line 14, column 3 (id)
  lines[13] = cells.join(',');
  const bad = join(tmp, 'bad.csv');
  writeFileSync(bad, lines.join('\n'));
  const { state } = await fit(bad);
  assert.equal(state, 'failed');
  const msg = await page.textContent('#proc-msg');
  assert.match(msg, /bad\.csv: line 14, column 3 \(id\): "1\.2x"/);
  assert.match(msg, /is kept/);
  assert.equal(await page.isVisible('#proc-report'), true);
  assert.equal(await page.textContent('#proc-shown'), heading);
  assert.equal(await data('processes'), '1');
  // a W that is not a number is named before anything runs
  await page.fill('#proc-w', '10 u');
  await page.click('#proc-fit');
  assert.match(await page.textContent('#proc-msg'), /^W: "10 u" is not a number/);
  await page.fill('#proc-w', '');
});

test('a file dropped on the panel is read like a chosen one', async () => {
  const text = readFileSync(demoN, 'utf8');
  await page.evaluate((t) => {
    const dt = new DataTransfer();
    dt.items.add(new File([t], 'dropped.csv', { type: 'text/csv' }));
    const target = document.getElementById('proc');
    for (const type of ['dragover', 'drop']) target.dispatchEvent(new DragEvent(type, { dataTransfer: dt, bubbles: true, cancelable: true }));
  }, text);
  await page.waitForFunction(() => document.body.dataset.procFile === 'dropped.csv');
  assert.match(await page.textContent('#proc-file-note'), /^dropped\.csv: .*704 lines, read in this page/);
});

test('save the process file, load it back: the same design fragment', async () => {
  await page.click('#proc-items .proc-show');
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click('#proc-save')]);
  const path = join(tmp, dl.suggestedFilename());
  await dl.saveAs(path);
  savedPath = path;
  const saved = JSON.parse(readFileSync(path, 'utf8'));
  assert.equal(saved.format, 'stagewright-process');
  assert.equal(saved.base, 'd180');
  assert.equal(saved.source.n.file, 'demo_n.csv');
  assert.ok(Object.keys(saved.n).length > 10 && saved.n_bins.length === 4);
  // From a design on the base process, the loaded file puts the design
  // where the fit put it.
  await open(page, DESIGN);
  await page.setInputFiles('#proc-load', path);
  await page.waitForFunction(() => document.body.dataset.procLoad && document.body.dataset.procLoad !== 'running');
  assert.equal(await data('procLoad'), 'done', await page.textContent('#proc-list-msg'));
  assert.equal(await data('processes'), '2');
  assert.equal(await page.isVisible('#proc-no-plots'), true);
  assert.equal(await page.locator('#proc-error-table tbody tr').count(), 6, 'the report came with the file');
  const loaded = await designWith('#proc-design-n');
  assert.equal(loaded.canonical, designed.canonical);
  assert.equal(loaded.id, designed.id);
});

test('bad process files: JSON by line and column, base and parameters by key', async () => {
  const text = JSON.parse(readFileSync(savedPath, 'utf8'));
  // A literal cut short: the browser's JSON.parse names no position for
  // it, the page's own scanner finds it (the t of "tru").
  const pretty = JSON.stringify(text, null, 2).replace(/"vdd": [0-9.]+/, '"vdd": tru');
  const vddLine = pretty.split('\n').findIndex((l) => l.includes('"vdd"'));
  const truAt = `line ${vddLine + 1}, column ${pretty.split('\n')[vddLine].indexOf('tru') + 1}: not JSON`;
  const cases = [
    ['cut literal', pretty, new RegExp(truAt)],
    // the error is where the member after the missing comma begins
    ['missing comma', JSON.stringify(text, null, 2).replace('"version": 1,', '"version": 1'), /line 4, column 3: not JSON/],
    ['unknown base', JSON.stringify({ ...text, base: 'd7' }), /base: unknown base process "d7"/],
    ['unknown parameter', JSON.stringify({ ...text, n: { ...text.n, vt0x: 0.4 } }), /n\.vt0x: unknown parameter/],
    ['threshold out of range', JSON.stringify({ ...text, n: { ...text.n, thresh: 50 } }), /n\.thresh=50: /],
  ];
  for (const [name, body, want] of cases) {
    const path = join(tmp, `bad-${name.replace(/ /g, '-')}.json`);
    writeFileSync(path, body);
    await page.setInputFiles('#proc-load', path);
    await page.waitForFunction(() => document.body.dataset.procLoad && document.body.dataset.procLoad !== 'running');
    assert.equal(await data('procLoad'), 'failed', name);
    const msg = await page.textContent('#proc-list-msg');
    assert.match(msg, want, `${name}: ${msg}`);
    assert.equal(await data('processes'), '2', `${name}: nothing added`);
  }
});

test('rename and delete in the list, kept across a reload', async () => {
  const first = page.locator('#proc-items li').first().locator('input.saved-name');
  await first.fill('my fab 180');
  await first.press('Enter');
  await first.dispatchEvent('change');
  await open(page, DESIGN);
  assert.equal(await page.locator('#proc-items li').first().locator('input.saved-name').inputValue(), 'my fab 180');
  await page.locator('#proc-items .proc-delete').first().click();
  assert.equal(await data('processes'), '1');
  await open(page, DESIGN);
  assert.equal(await page.locator('#proc-items li').count(), 1);
});

test('a p-type file: magnitudes in the plots, a p-type design on it', async () => {
  await open(page, DESIGN);
  await page.selectOption('#proc-pol', 'p');
  const { state } = await fit(join(here, '..', '..', 'testdata', 'chardata', 'demo_p.csv'));
  assert.equal(state, 'done', await page.textContent('#proc-msg'));
  assert.equal(await page.textContent('#proc-shown'), 'demo_p: p-type on d180');
  assert.match(await page.textContent('#proc-summary'), /\|VGS\| 0\sV … 1\.8\sV/);
  assert.match(await page.textContent('#proc figcaption'), /^\|ID\| against \|VGS\|/);
  const onP = await designWith('#proc-design-p');
  assert.match(onP.canonical, /(^|&)pol=p(&|$)/);
  assert.match(onP.canonical, /&p\.thresh=/);
  assert.doesNotMatch(onP.canonical, /&n\./, 'the n-type device stays the base one');
  assert.equal(await page.evaluate(() => window.stagewrightPage.result().ok), true);
  // as n-type: M1 is the base's n-type device, the fitted p-type one stays in the link
  const onN = await designWith('#proc-design-n');
  assert.match(onN.canonical, /(^|&)pol=n(&|$)/);
  assert.match(onN.canonical, /&p\.thresh=/);
  await page.selectOption('#proc-pol', 'n');
});

test('cancel: the best parameters so far, marked, kept beside the full fit', async () => {
  const before = Number(await data('processes'));
  await page.setInputFiles('#proc-file', demoN);
  await page.waitForFunction(() => document.body.dataset.procFile === 'demo_n.csv');
  await page.click('#proc-fit');
  await page.click('#proc-cancel');
  await page.waitForFunction(() => document.body.dataset.fitState !== 'running', null, { timeout: 60000 });
  assert.equal(await data('fitState'), 'cancelled');
  assert.match(await page.textContent('#proc-progress-text'), /cancelled/);
  assert.match(await page.textContent('#proc-overall'), /cancelled before the end/);
  assert.equal(await page.textContent('#proc-shown'), 'demo_n (cancelled): n-type on d180');
  assert.equal(Number(await data('processes')), before + 1);
});

test('no request outside the page, no page errors', async () => {
  const foreign = b.requests.filter((u) => !(u.startsWith(singleURL) || u.startsWith('blob:') || u.startsWith('data:') || u === 'about:blank'));
  assert.deepEqual(foreign, []);
  assert.deepEqual(b.errors, []);
  assert.deepEqual(b.consoleErrors, []);
});
