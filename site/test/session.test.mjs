// A long session in one page: 10,000 slider moves by keyboard with the
// page's JavaScript heap and the engine's WebAssembly memory sampled after
// the warm-up and at the end; then reload, history and hand edits of the
// link keep the design; and the saved v=1 links open with their stored
// figures. Run by `make test-web` (so by `make test`).
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { singleURL, waitReady, afterEvaluation, dist } from './browser.mjs';
import { launchWith, engineProbe, pressMany } from '../bench/harness.mjs';
import { parseSI } from '../src/si.js';

let b;
let page;
const START = 'v=1&stage=cs&load=r&rd=10k&id=20u';
// Sliders that every cs stage with a resistor load shows.
const SLIDERS = ['#k-rsig-slider', '#k-cl-slider', '#k-rd-slider', '#k-l-slider'];
const MOVES = 10000;
// The warm-up: the first 4,000 moves. WebAssembly memory is the Go heap's
// high-water mark (it never shrinks). The design aids' engine reaches its
// working size after four or five refreshes of the aids (one at each pause
// of the session, every 1,000 moves here): measured, both engines together
// grow 11.5 → 13.5 → 14.5 → 15.75 MiB over the first 4,000 moves and then
// stay at 15.75 MiB to the end. The series every 1,000 moves is printed, so
// the warm-up and any later trend show in the output.
const WARMUP = 4000;
const RUN = 50; // moves one way, then as many back: each slider ends where it began
// Flat means within 10 % (the task's budget): a leak of even 100 bytes per
// move would add 1 MB over 9,000 moves, several times 10 % of a ~5 MB heap.
const FLAT = 0.1;

before(async () => {
  // precise-memory-info: performance.memory unrounded; expose-gc: collect before each sample.
  b = await launchWith(['--enable-precise-memory-info', '--js-flags=--expose-gc']);
  await b.context.setOffline(true);
  page = b.context.pages()[0] || (await b.context.newPage());
});

after(async () => {
  if (b) await b.close();
});

async function openAt(fragment) {
  await page.goto('about:blank');
  await page.goto(`${singleURL}#${fragment}`);
  await waitReady(page);
}

// Idle: the engine has nothing queued, the result is drawn, and the design
// aids have refreshed for it (they do so REFRESH_MS after the last move; a
// sample taken before that would miss their charts and count them as growth).
const idle = async () => {
  await page.waitForFunction(() => document.body.dataset.busy !== 'true' && ['ready', 'no-result'].includes(document.body.dataset.state));
  await page.waitForFunction(() => document.body.dataset.state === 'no-result' || document.body.dataset.aids === 'ready', null, { timeout: 60000 });
};

async function jsHeap() {
  return page.evaluate(() => {
    window.gc();
    window.gc();
    return performance.memory.usedJSHeapSize;
  });
}

const mb = (n) => `${(n / 1048576).toFixed(2)} MiB`;

test(`${MOVES} slider moves by keyboard: heap and WebAssembly memory stay flat`, { timeout: 600000 }, async (t) => {
  await openAt(START);
  const probe = await engineProbe(b.context, page);
  const keys = await b.context.newCDPSession(page);
  const e0 = Number(await page.evaluate(() => document.body.dataset.evaluations));
  let moves = 0;
  let warm = null;
  const series = []; // [moves, page JS heap, wasm bytes, workers' JS heap] every 1,000 moves, to tell a trend from noise
  const t0 = Date.now();
  for (let chunk = 0; moves < MOVES; chunk++) {
    const slider = page.locator(SLIDERS[chunk % SLIDERS.length]);
    await slider.focus();
    for (const key of ['ArrowRight', 'ArrowLeft']) {
      await pressMany(keys, key, RUN);
      moves += RUN;
    }
    if (moves % 1000 === 0) {
      await idle();
      series.push([moves, await jsHeap(), await probe.wasmBytes(), (await probe.workerHeap()).usedSize]);
    }
    if (moves === WARMUP) {
      await idle();
      warm = { js: await jsHeap(), wasm: await probe.wasmBytes(), worker: (await probe.workerHeap()).usedSize, canonical: await page.evaluate(() => window.stagewrightPage.canonical()) };
    }
  }
  await idle();
  const end = { js: await jsHeap(), wasm: await probe.wasmBytes(), worker: (await probe.workerHeap()).usedSize, canonical: await page.evaluate(() => window.stagewrightPage.canonical()) };
  const evaluations = Number(await page.evaluate(() => document.body.dataset.evaluations)) - e0;
  const workers = probe.workers();
  const seconds = (Date.now() - t0) / 1000;
  await probe.detach();
  await keys.detach();
  const change = (a, z) => (z - a) / a;
  t.diagnostic(`${moves} moves in ${seconds.toFixed(1)} s, ${evaluations} evaluations shown (the rest coalesced)`);
  t.diagnostic(`page JS heap: ${mb(warm.js)} after ${WARMUP} moves, ${mb(end.js)} at the end (${(100 * change(warm.js, end.js)).toFixed(1)} %)`);
  t.diagnostic(`engines' WebAssembly memory (both workers): ${mb(warm.wasm)} after ${WARMUP} moves, ${mb(end.wasm)} at the end (${(100 * change(warm.wasm, end.wasm)).toFixed(1)} %)`);
  t.diagnostic(`engine workers' JS heap (${workers} workers): ${mb(warm.worker)} → ${mb(end.worker)}`);
  t.diagnostic(`every 1,000 moves (page JS heap / wasm memory / workers' JS heap, MiB): ${series.map(([n, js, w, wk]) => `${n}: ${(js / 1048576).toFixed(2)}/${(w / 1048576).toFixed(2)}/${(wk / 1048576).toFixed(2)}`).join(', ')}`);
  // Two engines: the page's and the design aids' (see aidEngine in main.js).
  assert.equal(workers, 2, `${workers} engine workers measured`);
  assert.equal(await page.evaluate(() => document.body.dataset.aidEngine), 'own', 'the design aids share the page engine');
  assert.ok(evaluations >= MOVES / 50, `only ${evaluations} evaluations for ${moves} moves: the sliders did not drive the engine`);
  assert.deepEqual(b.errors, [], 'page errors');
  assert.equal(end.canonical, warm.canonical, 'every slider came back to where it was, so the design must be the same');
  assert.ok(Math.abs(change(warm.js, end.js)) <= FLAT, `page JS heap ${mb(warm.js)} → ${mb(end.js)}`);
  assert.ok(Math.abs(change(warm.wasm, end.wasm)) <= FLAT, `WebAssembly memory ${mb(warm.wasm)} → ${mb(end.wasm)}`);
  // The workers' JS heap is a sawtooth (measured: 1.3 → 1.7 MiB and back,
  // every four samples): it holds the JavaScript objects the Go side still
  // refers to, released in batches when Go's collector finalizes them. Two
  // single samples can sit at a trough and a crest, so the check compares
  // crests: the highest sample of the last three after warm-up against the
  // highest of the three before them. A leak raises the crests.
  const after = series.filter(([n]) => n > WARMUP).map(([, , , wk]) => wk);
  const crest = (xs) => Math.max(...xs);
  const early = crest(after.slice(0, 3));
  const late = crest(after.slice(-3));
  assert.ok(after.length >= 6, `only ${after.length} samples after the warm-up`);
  assert.ok(change(early, late) <= FLAT, `workers' JS heap crests ${mb(early)} → ${mb(late)}`);
});

/** Values the controls show, by key, for the keys given. */
async function shown(keys) {
  return page.evaluate((ks) => Object.fromEntries(ks.map((k) => [k, document.getElementById(`k-${k}`)?.value ?? null])), keys);
}

const sameSI = (a, b2) => parseSI(a).value === parseSI(b2).value;

test('reload, back and forward and a hand-edited link keep the design', async () => {
  const given = 'v=1&stage=cg&load=r&rd=4.7k&id=47u&rsig=220&cl=220f&vg=1.1';
  await openAt(given);
  // One slider move: the link follows the design (history is replaced, not pushed).
  await page.locator('#k-rd-slider').focus();
  await afterEvaluation(page, async () => {
    for (let i = 0; i < 5; i++) await page.keyboard.press('ArrowRight');
  });
  const moved = await page.evaluate(() => window.stagewrightPage.canonical());
  assert.equal(await page.evaluate(() => location.hash.slice(1)), moved, 'the link does not hold the moved design');
  const keys = ['rd', 'id', 'rsig', 'cl', 'vg'];
  const before = await shown(keys);
  assert.ok(!sameSI(before.rd, '4.7k'), `rd did not move: ${before.rd}`);

  await page.reload();
  await waitReady(page, 0);
  assert.equal(await page.evaluate(() => window.stagewrightPage.canonical()), moved, 'reload lost the design');
  assert.deepEqual(await shown(keys), before, 'reload: the controls differ');
  assert.equal(await page.isChecked('#pick-stage-cg'), true);

  // Edit the link by hand: one value changes, a history entry is added, the rest stays.
  const edited = moved.split('&').map((p) => (p.startsWith('rsig=') ? 'rsig=330' : p)).join('&');
  assert.notEqual(edited, moved);
  const n0 = Number(await page.evaluate(() => document.body.dataset.evaluations));
  await page.evaluate((f) => {
    location.hash = f;
  }, edited);
  await waitReady(page, n0);
  const afterEdit = await shown(keys);
  assert.ok(sameSI(afterEdit.rsig, '330'), `hand edit not applied: rsig shows ${afterEdit.rsig}`);
  for (const k of keys.filter((k) => k !== 'rsig')) assert.equal(afterEdit[k], before[k], `hand edit of rsig changed ${k}`);

  const n1 = Number(await page.evaluate(() => document.body.dataset.evaluations));
  await page.goBack();
  await waitReady(page, n1);
  assert.equal(await page.evaluate(() => window.stagewrightPage.canonical()), moved, 'back did not restore the design before the edit');
  assert.deepEqual(await shown(keys), before, 'back: the controls differ');

  const n2 = Number(await page.evaluate(() => document.body.dataset.evaluations));
  await page.goForward();
  await waitReady(page, n2);
  assert.ok(sameSI((await shown(['rsig'])).rsig, '330'), 'forward did not bring the edit back');
  assert.equal(await page.isChecked('#pick-stage-cg'), true, 'forward lost the stage');

  // Leaving the page and coming back through history reloads the document with the link.
  await page.goto('about:blank');
  await page.goBack();
  await waitReady(page, 0);
  assert.ok(sameSI((await shown(['rsig'])).rsig, '330'), 'back from another page lost the design');
  assert.deepEqual(b.errors, []);
});

test('the saved v=1 links open in the page with the figures stored for them', async () => {
  // The stored links and their figures, as the Go migration test keeps them.
  const dir = join(dist, '..', '..', 'core', 'design', 'testdata', 'fragments');
  const golden = JSON.parse(readFileSync(join(dir, 'v1.golden.json'), 'utf8'));
  assert.ok(golden.length >= 40, `only ${golden.length} stored v=1 links`);
  for (const g of golden) {
    const fragment = g.fragment.startsWith('#') ? g.fragment.slice(1) : g.fragment;
    await openAt(fragment);
    const notice = await page.evaluate(() => (document.getElementById('notice').hidden ? '' : document.getElementById('notice').textContent));
    assert.equal(notice, '', `v=1 link ${fragment.slice(0, 80)} shows problems: ${notice}`);
    const r = await page.evaluate(() => window.stagewrightPage.result());
    if (g.gain === undefined || g.gain === null) continue;
    // The golden file keeps 6 significant digits: agreement to 5e-6 relative.
    const gain = r && r.midband && r.midband.gain;
    assert.ok(Math.abs(gain - g.gain) <= 5e-6 * Math.abs(g.gain), `line ${g.line}: gain ${gain}, stored ${g.gain}`);
  }
  assert.deepEqual(b.errors, []);
});
