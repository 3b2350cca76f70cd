// Browser tests of the page as a daily tool: no sideways scroll at phone,
// tablet and desktop widths with every aid run, one place for each control
// with a label that says what it is, and the readings the page writes.
// Each test here failed before the fix it guards.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { launch, open, afterEvaluation } from './browser.mjs';

let b;
let page;
const repo = join(dirname(fileURLToPath(import.meta.url)), '..', '..');

before(async () => {
  b = await launch();
  await b.context.setOffline(true);
  page = b.context.pages()[0] || (await b.context.newPage());
});

after(async () => {
  if (b) await b.close();
});

const WIDTHS = [390, 768, 1280];

async function aidsReady() {
  await page.waitForFunction(() => document.body.dataset.aids === 'ready', null, { timeout: 60000 });
}

async function runJob(button, stateKey) {
  await page.click(button);
  await page.waitForFunction((k) => document.body.dataset[k] && document.body.dataset[k] !== 'running', stateKey, { timeout: 120000 });
}

/** How far the document reaches past the window, in CSS pixels (0: no sideways scroll). */
const overflow = () => page.evaluate(() => document.documentElement.scrollWidth - innerWidth);

async function noSidewaysScroll(label) {
  for (const width of WIDTHS) {
    await page.setViewportSize({ width, height: 900 });
    // two frames, so the charts' resize observers have run
    await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => requestAnimationFrame(r))));
    assert.equal(await overflow(), 0, `${label}: the page scrolls sideways at ${width} px`);
  }
}

test('no sideways scroll at 390, 768 or 1280 px on any stage, before and after the aids run', async () => {
  // Targets so that the sizing panel and the yield have something to show;
  // 200 samples keep the Monte Carlo run short.
  for (const stage of ['cs', 'cg', 'sf']) {
    await page.setViewportSize({ width: 390, height: 900 });
    await open(page, `v=1&stage=${stage}&cl=1p&t.gain=2&t.f3db=20M&t.idd=200u&mc=200`);
    await aidsReady();
    await noSidewaysScroll(`${stage}, aids not run`);
    await runJob('#mc-run', 'mcState');
    await runJob('#size-search', 'sizeState');
    await noSidewaysScroll(`${stage}, Monte Carlo and sizing run`);
  }
  await page.setViewportSize({ width: 1280, height: 800 });
});

test('the left column holds only what shapes the design, and each setting has one place', async () => {
  await open(page, 'v=1&stage=cs');
  const groups = await page.$$eval('#controls fieldset.group', (fs) => fs.map((f) => f.dataset.group));
  for (const g of ['design aids', 'targets', 'sizing']) assert.ok(!groups.includes(g), `left column has the ${g} group: ${groups}`);
  for (const key of ['amp', 'mc', 'seed', 'sw', 'pin', 'vary', 't.gain', 'lo.w']) {
    assert.equal(await page.locator(`#controls [data-key="${key}"]`).count(), 0, `${key} is in the left column as well as its aid panel`);
  }
  // The corner shapes the evaluation itself and has no aid panel of its own.
  assert.equal(await page.locator('#controls [data-key="corner"]').count(), 1);
  // One process-parameter disclosure, in the process group only.
  const disclosures = await page.$$eval('#controls details.overrides', (ds) => ds.map((d) => d.closest('fieldset').dataset.group));
  assert.deepEqual(disclosures, ['process']);
  assert.match(await page.textContent('#overrides-summary'), /none changed/);
  assert.equal(await page.locator('#controls details.overrides [data-key="t.gain"]').count(), 0);
  // The aid panels keep their own fields.
  for (const id of ['#aid-amp', '#aid-mc-n', '#aid-mc-seed', '#sweep-key', '#aid-vary-w']) assert.equal(await page.locator(id).count(), 1, `${id} missing`);
});

test('the override summary counts what the design sets; a compound unit gets no SI prefix', async () => {
  await open(page, 'v=1&stage=cs&n.kf=2e-25&p.vt0=0.5');
  assert.match(await page.textContent('#overrides-summary'), /\(2 changed of \d+\)/);
  await page.click('#overrides-summary');
  // The link's old name kf reads as flicker, in V²·F: 2e-25, never "200y" or "2e-10f".
  assert.equal(await page.inputValue('#k-n-flicker'), '2e-25');
  await open(page, 'v=1&stage=cs');
  await page.click('#overrides-summary');
  assert.equal(await page.inputValue('#k-n-flicker'), '1e-25');
});

test('Monte Carlo says what Run will do before the first run, and draws no empty frames', async () => {
  await open(page, 'v=1&stage=cs&mc=100&seed=3');
  await aidsReady();
  assert.equal(await page.locator('#mc-hists').isVisible(), false, 'histogram frames shown before any run');
  assert.match(await page.textContent('#mc-before'), /Run draws 100 samples .*seed 3/);
  await runJob('#mc-run', 'mcState');
  assert.equal(await page.locator('#mc-hists').isVisible(), true);
  assert.equal(await page.locator('#mc-before').isVisible(), false);
});

test('the exports are named for what they hold, and the Sweep panel exports its own table', async () => {
  await open(page, 'v=1&stage=cs&bias=id&sw=id&sw.lo=10u&sw.hi=1m&sw.n=5&load=r&rd=10k');
  await aidsReady();
  assert.equal((await page.textContent('#export-csv')).trim(), 'Frequency response as CSV');
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click('#sweep-csv')]);
  const text = readFileSync(await dl.path(), 'utf8');
  const lines = text.trim().split('\n').filter((l) => !l.startsWith('#'));
  const head = lines[0].split(',');
  assert.equal(head[0], 'id');
  assert.equal(head[head.length - 1], 'error');
  assert.equal(head.filter((c) => c === 'id').length, 1, `id twice in ${lines[0]}`);
  assert.equal(lines.length, 6, 'a header and five rows');
  // 1 mA through 10 kΩ cannot fit in 1.8 V: the last row says why.
  const last = lines[5].split(',');
  assert.equal(last[1], '', 'the 1 mA point has a gain');
  assert.match(lines[5], /,[^,]*\w[^,]*$/, `no reason in ${lines[5]}`);
});

test('an infeasible spec says "no design meets every target" once', async () => {
  await open(page, 'v=1&proc=d180&cl=1p&t.gain=20&t.f3db=50M&t.idd=200u');
  await aidsReady();
  await runJob('#size-search', 'sizeState');
  const msg = await page.textContent('#size-message');
  assert.equal((msg.match(/no design meets every target/gi) || []).length, 1, msg);
});

test("a follower's gain is written as plain V/V", async () => {
  await open(page, 'v=1&stage=sf');
  const gain = (await page.textContent('#card-gain .card-value')).replace('\u2009', ' ');
  assert.match(gain, /^0\.\d+ V\/V$/, gain);
});

test('a source follower with a current sink biased by current shows vin and writes it', async () => {
  await open(page, 'v=1&stage=sf&load=active&bias=id');
  assert.equal(await page.locator('#controls [data-key="vin"]').isVisible(), true, 'no vin control');
  assert.match(await page.evaluate(() => window.stagewrightPage.canonical()), /&vin=1\.3(&|$)/, 'the link (Copy link) leaves vin out');
  await afterEvaluation(page, async () => {
    await page.fill('#k-vin', '1.0');
    await page.press('#k-vin', 'Enter');
  });
  const r = await page.evaluate(() => window.stagewrightPage.result());
  assert.equal(r.load_op.region, 'triode', 'vin = 1.0 V should put the sink in triode');
});

test('nothing pinned stays nothing pinned after a design without a result', async () => {
  await open(page, 'v=1&stage=cs&load=r&rd=10k');
  await aidsReady();
  for (const v of ['1M', '10k']) {
    await afterEvaluation(page, async () => {
      await page.fill('#k-rd', v);
      await page.press('#k-rd', 'Enter');
    });
  }
  await aidsReady();
  assert.match(await page.textContent('#pin-state'), /Nothing pinned/);
  assert.equal(await page.locator('#pin-compare').count(), 0);
  assert.equal(await page.locator('#pin-clear').isDisabled(), true);
});

test("an estimate whose assumption fails says so beside it", async () => {
  await open(page, 'v=1&stage=cs&load=r&rd=10k&cl=1p');
  const miller = await page.textContent('#estimates .caveat[data-estimate="miller_input_pole"]');
  assert.match(miller, /output pole .* below the input pole/);
  assert.equal(await page.locator('#estimates .caveat[data-estimate="output_pole"]').count(), 0);
});

const canonicalMap = () => page.evaluate(() => Object.fromEntries(window.stagewrightPage.splitFragment(window.stagewrightPage.canonical())));

test('a polarity change mirrors the levels; a stage change keeps only what the new stage uses', async () => {
  // vin = 0.8 V (not the default) on an n-type cs stage biased by its input level
  await open(page, 'v=1&stage=cs&bias=vin&vin=0.8&rs=500&rd=20k');
  await afterEvaluation(page, () => page.click('label[for="pick-pol-p"]'));
  let c = await canonicalMap();
  assert.equal(c.pol, 'p');
  assert.equal(c.vin, '1', `vin ${c.vin}: 0.8 V above ground on n-type is 1.0 V (1.8 − 0.8) on p-type`);
  assert.equal(c.rd, '20k', 'a value the new polarity uses is kept');
  // cs → cg: rs (degeneration of a cs stage) has no place in a cg stage, and
  // vin means another node there, so the cg default comes in.
  await afterEvaluation(page, () => page.click('label[for="pick-stage-cg"]'));
  c = await canonicalMap();
  assert.equal(c.stage, 'cg');
  assert.equal(c.rs, undefined, 'rs carried into a cg stage');
  assert.notEqual(c.vin, '1', 'the cs input level carried into the cg source level');
  assert.equal(c.rd, '20k');
});

test('Zin and Zout are plotted, and the s-plane axes carry their values', async () => {
  await open(page, 'v=1&stage=cg&load=r&rd=10k');
  assert.equal(await page.locator('#plot-z canvas').count(), 1, 'no impedance plot');
  assert.match(await page.textContent('#readout-z'), /\|Zin\| .*Ω.*\|Zout\|/);
  const labels = await page.$$eval('#splane text', (ts) => ts.map((t) => t.textContent));
  const ticks = labels.filter((t) => /^−?\d+(\.\d+)?[kMGT]?Hz$/.test(t));
  assert.ok(ticks.length >= 2, `s-plane tick labels: ${labels}`);
  assert.ok(ticks.some((t) => t.startsWith('−')), 'no tick on the left half-plane');
});

test('the schematic shows the operating point, follows an edit, and a toggle hides it', async () => {
  await open(page, 'v=1&stage=cs&load=active&rs=100');
  const read = () => page.$$eval('#schematic .sch-op text', (ts) => Object.fromEntries(ts.map((t) => [t.dataset.op, t.textContent])));
  const r = await page.evaluate(() => window.stagewrightPage.result());
  let op = await read();
  const volts = (v) => page.evaluate((x) => window.stagewrightPage.formatSI(x, 3, 'V'), v);
  for (const node of ['in', 'out', 'src', 'bias']) assert.equal(op[`node-${node}`], await volts(r.nodes[node]), `node ${node}`);
  assert.match(op.current, /^↓ 100\s?µA$/);
  assert.equal(op['region-M1'], 'saturation');
  assert.equal(op['region-M2'], 'saturation');
  // Given levels instead of a given current: with the default input level and
  // load gate drive the load sources less than M1 would sink, so M1 leaves
  // saturation (triode on d180, found by evaluating it), and the labels follow.
  await afterEvaluation(page, () => page.click('label[for="pick-bias-vin"]'));
  op = await read();
  const r2 = await page.evaluate(() => window.stagewrightPage.result());
  assert.equal(op['node-out'], await volts(r2.nodes.out));
  assert.equal(op['region-M1'], r2.op.region);
  assert.equal(op['region-M1'], 'triode');
  assert.equal(await page.locator('#schematic .sch-op').isVisible(), true);
  await page.uncheck('#schematic-op');
  assert.equal(await page.locator('#schematic .sch-op').isVisible(), false, 'the toggle did not hide the operating point');
  await page.check('#schematic-op');
});

test('saved designs survive a reload and round-trip through a file that the CLI reads', async () => {
  await open(page, 'v=1&stage=cs&load=r&rd=10k');
  await page.evaluate(() => localStorage.clear());
  await page.reload();
  await page.waitForFunction(() => document.body.dataset.state === 'ready');
  await page.click('#saved-panel summary');
  await page.click('#saved-save');
  await afterEvaluation(page, () => page.click('label[for="pick-stage-sf"]'));
  await page.click('#saved-save');
  assert.equal(await page.locator('#saved-table tbody tr').count(), 2);
  const first = page.locator('#saved-table tbody tr').first();
  await first.locator('.saved-name').fill('my cs <b>stage</b>');
  await first.locator('.saved-name').press('Enter');
  // a reload: the list is still there, with the new name as plain text
  await page.reload();
  await page.waitForFunction(() => document.body.dataset.state === 'ready');
  await page.click('#saved-panel summary');
  assert.equal(await page.locator('#saved-table tbody tr').count(), 2);
  assert.equal(await page.locator('#saved-table .saved-name').first().inputValue(), 'my cs <b>stage</b>');
  assert.equal(await page.locator('#saved-table b').count(), 0, 'a name became markup');
  const cells = await page.locator('#saved-table tbody tr').nth(1).locator('td').allTextContents();
  assert.equal(cells[1], 'source follower');
  assert.match(cells[2], /^0\.\d+\s?V\/V$/);
  assert.match(cells[3], /Hz$/);
  assert.match(cells[4], /W$/);
  // reopen the first: the page shows that design
  await afterEvaluation(page, () => page.locator('#saved-table .saved-open').first().click());
  assert.match(await page.evaluate(() => window.stagewrightPage.canonical()), /stage=cs&/);
  // export, and the command line reads the file: one ok line per design
  const [dl] = await Promise.all([page.waitForEvent('download'), page.click('#saved-export')]);
  const file = await dl.path();
  const text = readFileSync(file, 'utf8');
  assert.match(text, /^\/\/ name: my cs <b>stage<\/b>$/m);
  const run = spawnSync('go', ['run', './core/cmd/stagewright', 'eval', '-'], { cwd: repo, input: text, encoding: 'utf8' });
  assert.equal(run.status, 0, `stagewright eval - exited ${run.status}: ${run.stderr}`);
  const answers = run.stdout.trim().split('\n').map((l) => JSON.parse(l));
  assert.deepEqual(answers.map((a) => a.ok), [true, true]);
  // delete one
  await page.locator('#saved-table .saved-delete').nth(1).click();
  assert.equal(await page.locator('#saved-table tbody tr').count(), 1);
  // import the exported file with bad lines mixed in: each is named by its line
  const lines = text.trim().split('\n');
  const mixed = [...lines, 'v=1&stage=xx', '', '// name: too much current', 'v=1&stage=cs&load=r&id=1m&rd=10k'].join('\n');
  await page.setInputFiles('#saved-import', { name: 'mixed.txt', mimeType: 'text/plain', buffer: Buffer.from(mixed) });
  await page.waitForFunction(() => document.body.dataset.savedImport === 'done');
  const msg = await page.textContent('#saved-msg');
  assert.match(msg, /2 designs added/, msg);
  assert.match(msg, new RegExp(`line ${lines.length + 1}: stage`), msg);
  assert.match(msg, new RegExp(`line ${lines.length + 4}: .*operating point`), msg);
  assert.equal(await page.locator('#saved-table tbody tr').count(), 3);
  assert.equal(await page.locator('#saved-table .saved-name').nth(1).inputValue(), 'my cs <b>stage</b>');
});
