// Helpers shared by the browser benchmark (bench.mjs) and the hardening
// tests (test/hostile.test.mjs, test/session.test.mjs): Debian's Chromium
// with extra flags in a fresh profile, and a DevTools session on the
// engine's Worker to read its WebAssembly memory.
//
// The page has no hook that reports the engine's memory, so the worker's
// WebAssembly.Memory is found through the DevTools protocol: Runtime.queryObjects
// on WebAssembly.Memory.prototype inside the worker, then buffer.byteLength
// of each. The change that would make this a plain message is written up in
// the report of the hardening task (a 'memory' method answered by worker.js).
import { chromium } from 'playwright-core';
import { mkdtempSync, rmSync, existsSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { executablePath, singleFile } from '../test/browser.mjs';

export const BASE_ARGS = [
  '--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
  '--disable-background-networking', '--disable-component-update', '--disable-sync',
];

/**
 * Launches Chromium in a new, empty profile with BASE_ARGS plus `extraArgs`.
 * Records requests, page errors, console errors and dialogs (dismissed).
 */
export async function launchWith(extraArgs = []) {
  if (!existsSync(executablePath)) throw new Error(`${executablePath} not found: install Debian's chromium`);
  if (!existsSync(singleFile)) throw new Error(`${singleFile} not built: run make site`);
  const profile = mkdtempSync(join(tmpdir(), 'stagewright-bench-'));
  const context = await chromium.launchPersistentContext(profile, {
    executablePath,
    headless: true,
    args: [...BASE_ARGS, ...extraArgs],
    viewport: { width: 1280, height: 800 },
  });
  const requests = [];
  const errors = [];
  const consoleErrors = [];
  const dialogs = [];
  context.on('request', (r) => requests.push(r.url()));
  const watch = (page) => {
    page.on('pageerror', (e) => errors.push(String(e)));
    page.on('console', (m) => {
      if (m.type() === 'error') consoleErrors.push(m.text());
    });
    page.on('dialog', (d) => {
      dialogs.push(`${d.type()}: ${d.message()}`);
      d.dismiss().catch(() => {});
    });
  };
  context.on('page', watch);
  for (const p of context.pages()) watch(p);
  const close = async () => {
    await context.close();
    rmSync(profile, { recursive: true, force: true });
  };
  return { context, requests, errors, consoleErrors, dialogs, profile, close };
}

/**
 * Opens a DevTools session on the page and attaches to its dedicated
 * workers (the engines). Returns {workers(), wasmBytes(), workerHeap(), detach()}.
 * Call after the page has started its engine.
 */
export async function engineProbe(context, page, { timeoutMs = 10000 } = {}) {
  const cdp = await context.newCDPSession(page);
  const waiting = new Map();
  let nextId = 1;
  const sessions = []; // every engine worker: the page's own and the design aids'
  const attached = new Promise((resolve) => {
    cdp.on('Target.attachedToTarget', (e) => {
      if (e.targetInfo.type !== 'worker') return;
      sessions.push(e.sessionId);
      resolve();
    });
  });
  cdp.on('Target.receivedMessageFromTarget', (e) => {
    if (!sessions.includes(e.sessionId)) return;
    const m = JSON.parse(e.message);
    const w = waiting.get(`${e.sessionId}/${m.id}`);
    if (!w) return;
    waiting.delete(`${e.sessionId}/${m.id}`);
    if (m.error) w.reject(new Error(`worker DevTools: ${m.error.message}`));
    else w.resolve(m.result);
  });
  // Non-flat sessions: the messages go through Target.sendMessageToTarget,
  // so this session does not disturb playwright's own.
  await cdp.send('Target.setAutoAttach', { autoAttach: true, waitForDebuggerOnStart: false, flatten: false });
  let timer;
  await Promise.race([
    attached,
    new Promise((_, reject) => {
      timer = setTimeout(() => reject(new Error(`no engine worker attached within ${timeoutMs} ms`)), timeoutMs);
    }),
  ]);
  clearTimeout(timer);
  const send = (sessionId, method, params = {}) =>
    new Promise((resolve, reject) => {
      const id = nextId++;
      waiting.set(`${sessionId}/${id}`, { resolve, reject });
      cdp.send('Target.sendMessageToTarget', { sessionId, message: JSON.stringify({ id, method, params }) }).catch(reject);
    });
  const sum = async (each) => (await Promise.all(sessions.map(each))).reduce((a, b) => a + b, 0);
  return {
    /** How many engine workers the page runs. */
    workers: () => sessions.length,
    /** Bytes of every WebAssembly.Memory alive in the engine workers, summed. */
    async wasmBytes() {
      const total = await sum(async (sid) => {
        const proto = await send(sid, 'Runtime.evaluate', { expression: 'WebAssembly.Memory.prototype' });
        const list = await send(sid, 'Runtime.queryObjects', { prototypeObjectId: proto.result.objectId });
        const sizes = await send(sid, 'Runtime.callFunctionOn', {
          objectId: list.objects.objectId,
          functionDeclaration: 'function () { return this.map((m) => m.buffer.byteLength); }',
          returnByValue: true,
        });
        const values = sizes.result.value;
        return Array.isArray(values) ? values.reduce((a, b) => a + b, 0) : 0;
      });
      if (total === 0) throw new Error('no WebAssembly.Memory found in the engine workers');
      return total;
    },
    /** The engine workers' JavaScript heaps after a collection, summed: {usedSize} in bytes. */
    async workerHeap() {
      const usedSize = await sum(async (sid) => {
        await send(sid, 'HeapProfiler.collectGarbage').catch(() => {});
        return (await send(sid, 'Runtime.getHeapUsage')).usedSize;
      });
      return { usedSize };
    },
    async detach() {
      await cdp.detach().catch(() => {});
    },
  };
}

/** p-th percentile (0…100) of numbers, nearest rank. */
export function percentile(values, p) {
  if (!values.length) return NaN;
  const s = [...values].sort((a, b) => a - b);
  const rank = Math.min(s.length, Math.max(1, Math.ceil((p / 100) * s.length)));
  return s[rank - 1];
}

/**
 * Installs, in the page, a recorder of slider latency: from the slider's
 * input event to the first animation frame after the engine's answer was
 * rendered (the page counts answers in body[data-evaluations], set at the
 * start of its render; the MutationObserver runs after that render's task,
 * and the next requestAnimationFrame callback runs before that frame paints
 * the updated canvases). Samples go to window.__swLatency.
 */
export async function installLatencyRecorder(page) {
  await page.evaluate(() => {
    const rec = { samples: [], pending: null };
    window.__swLatency = rec;
    document.addEventListener(
      'input',
      (e) => {
        if (!(e.target instanceof HTMLInputElement) || e.target.type !== 'range') return;
        rec.pending = { t0: performance.now(), n0: Number(document.body.dataset.evaluations || 0) };
      },
      true,
    );
    new MutationObserver(() => {
      const p = rec.pending;
      if (!p || Number(document.body.dataset.evaluations || 0) <= p.n0 || document.body.dataset.busy === 'true') return;
      rec.pending = null;
      const applied = performance.now();
      // the worker's own time for the evaluation, as the status line reports it
      const m = /Computed in ([\d.]+) ms/.exec(document.getElementById('status')?.textContent || '');
      const engine = m ? Number(m[1]) : NaN;
      requestAnimationFrame(() => {
        rec.samples.push({ applied: applied - p.t0, frame: performance.now() - p.t0, engine });
      });
    }).observe(document.body, { attributes: true, attributeFilter: ['data-evaluations', 'data-busy'] });
  });
}

/**
 * Presses `key` n times on the focused element through the DevTools input
 * domain, sending all n before waiting for any acknowledgement, so the page
 * gets the keys as fast as it can take them (playwright's keyboard.press
 * waits for each key's round trip, which a busy page makes slow).
 */
export async function pressMany(cdp, key, n) {
  const codes = { ArrowRight: 39, ArrowLeft: 37, ArrowUp: 38, ArrowDown: 40 };
  const base = { key, code: key, windowsVirtualKeyCode: codes[key], nativeVirtualKeyCode: codes[key] };
  const sent = [];
  for (let i = 0; i < n; i++) {
    sent.push(cdp.send('Input.dispatchKeyEvent', { type: 'rawKeyDown', ...base }));
    sent.push(cdp.send('Input.dispatchKeyEvent', { type: 'keyUp', ...base }));
  }
  await Promise.all(sent);
}
