// The page's side of the bridge: starts the Go engine in a Blob-URL Worker,
// checks its version against the bundle's, and coalesces evaluations so only
// the newest design is computed while the engine is busy.
import workerSource from 'stagewright:worker';
import { unpack } from './pack.js';

/* global STAGEWRIGHT_VERSION */
export const PAGE_VERSION = typeof STAGEWRIGHT_VERSION === 'string' ? STAGEWRIGHT_VERSION : 'dev';

/** Finds the gzip-compressed WebAssembly: inlined in the page, or beside it. */
async function loadWasmGz() {
  const inline = document.getElementById('stagewright-wasm');
  // Packed text (src/pack.js), not trimmed: it may begin or end with
  // whitespace-class characters that are data.
  if (inline) return unpack(inline.textContent).buffer;
  const r = await fetch(new URL('stagewright.wasm.gz', document.baseURI));
  if (!r.ok) throw new Error(`stagewright.wasm.gz: HTTP ${r.status}`);
  return r.arrayBuffer();
}

/**
 * The sweep series cross from Go as Float64Array (faster than JSON, see
 * wasm/glue_js_test.go); the page wants plain arrays with null where a
 * value is not finite, exactly as the JSON path writes them.
 */
export function plainSeries(response) {
  const r = response && response.result;
  if (!r) return;
  for (const part of ['ac', 'noise']) {
    const o = r[part];
    if (!o) continue;
    for (const [k, v] of Object.entries(o)) {
      if (!ArrayBuffer.isView(v)) continue;
      const a = new Array(v.length);
      for (let i = 0; i < v.length; i++) {
        const x = v[i];
        a[i] = x - x === 0 ? x : null; // x − x is 0 exactly when x is finite
      }
      o[k] = a;
    }
  }
}

export class Engine {
  constructor() {
    this.worker = null;
    this.nextId = 1;
    this.waiting = new Map();
    this.busy = false;
    this.queued = null; // {fragment, resolvers[]}: only the newest request waits
    this.version = null;
  }

  /**
   * Starts the worker from the WebAssembly in the page; resolves with
   * {version, initMs, module} (module: the compiled engine, for startFrom),
   * rejects with a readable reason.
   */
  async start() {
    // The worker first, so that its script compiles while this thread
    // unpacks the WebAssembly from the page.
    this.spawn();
    const gz = await loadWasmGz();
    if (this.failed) throw this.failed;
    return this.boot({ type: 'init', gz }, [gz]);
  }

  /** Starts a second engine in its own worker from a module another engine compiled. */
  async startFrom(module) {
    this.spawn();
    return this.boot({ type: 'init', module }, []);
  }

  spawn() {
    const url = URL.createObjectURL(new Blob([workerSource], { type: 'text/javascript' }));
    this.worker = new Worker(url);
    URL.revokeObjectURL(url);
    this.failed = null;
    this.worker.onerror = (e) => {
      this.failed = new Error(`engine worker failed: ${e.message || 'unknown error'}`);
    };
  }

  boot(init, transfer) {
    return new Promise((resolve, reject) => {
      this.worker.onerror = (e) => reject(new Error(`engine worker failed: ${e.message || 'unknown error'}`));
      this.worker.onmessage = (e) => {
        const m = e.data;
        if (m.type === 'ready') {
          this.version = m.version;
          if (m.version !== PAGE_VERSION) {
            reject(new Error(`version mismatch: page ${PAGE_VERSION}, engine ${m.version}; rebuild with make site`));
            return;
          }
          this.worker.onmessage = (ev) => this.onReply(ev.data);
          resolve(m);
        } else if (m.type === 'fatal') {
          reject(new Error(m.message));
        }
      };
      this.worker.postMessage(init, transfer);
    });
  }

  onReply(m) {
    if (m.type === 'fatal') {
      for (const w of this.waiting.values()) w.reject(new Error(m.message));
      this.waiting.clear();
      return;
    }
    const w = this.waiting.get(m.id);
    if (!w) return;
    this.waiting.delete(m.id);
    plainSeries(m.response);
    w.resolve({ response: m.response, ms: m.ms });
  }

  /** One call, not coalesced (schema, evaluateMany). */
  call(method, ...args) {
    const id = this.nextId++;
    return new Promise((resolve, reject) => {
      this.waiting.set(id, { resolve, reject });
      this.worker.postMessage({ type: 'call', id, method, args });
    });
  }

  /**
   * Evaluates a fragment. While an evaluation runs, newer requests replace
   * each other: superseded ones resolve with {superseded: true}.
   */
  evaluate(fragment) {
    return new Promise((resolve, reject) => {
      if (this.busy) {
        if (this.queued) for (const r of this.queued.resolvers) r.resolve({ superseded: true });
        this.queued = { fragment, resolvers: [{ resolve, reject }] };
        return;
      }
      this.run(fragment, [{ resolve, reject }]);
    });
  }

  run(fragment, resolvers) {
    this.busy = true;
    document.body.dataset.busy = 'true';
    this.call('evaluate', fragment).then(
      (r) => {
        for (const x of resolvers) x.resolve(r);
        this.next();
      },
      (err) => {
        for (const x of resolvers) x.reject(err);
        this.next();
      },
    );
  }

  next() {
    this.busy = false;
    const q = this.queued;
    this.queued = null;
    if (q) this.run(q.fragment, q.resolvers);
    else document.body.dataset.busy = 'false';
  }
}
