// Runs inside a Worker started from a Blob URL. wasm_exec.js (the Go
// runtime's JavaScript half, copied from the Go installation at build time)
// is prepended to this file by build.mjs, so `Go` is defined here.
//
// Protocol (postMessage):
//   page → worker  {type:'init', gz: ArrayBuffer (gzip of the .wasm)}
//                | {type:'init', module: WebAssembly.Module (compiled by another worker)}
//   worker → page  {type:'ready', version, initMs, module} | {type:'fatal', message}
//   page → worker  {type:'call', id, method, args}
//   worker → page  {type:'reply', id, response, ms}
/* global Go */

let api = null;
let memory = null; // the Go instance's WebAssembly.Memory (its buffer changes when it grows)

function gunzipped(buf) {
  return new Blob([buf]).stream().pipeThrough(new DecompressionStream('gzip'));
}

// Compiles while the bytes are still being decompressed (a Response made
// from the stream, typed application/wasm); where streaming compilation is
// missing, decompresses first and compiles the whole buffer.
async function instantiate(gz, imports) {
  if (typeof WebAssembly.instantiateStreaming === 'function') {
    const streamed = new Response(gunzipped(gz), { headers: { 'Content-Type': 'application/wasm' } });
    return WebAssembly.instantiateStreaming(streamed, imports);
  }
  const bytes = await new Response(gunzipped(gz)).arrayBuffer();
  return WebAssembly.instantiate(bytes, imports);
}

/**
 * The ArrayBuffers behind the typed arrays in response.result.ac and .noise
 * (the bridge puts all series in one buffer), to move instead of copy; never
 * the engine's own memory.
 */
function seriesBuffers(response) {
  const out = [];
  const r = response && response.result;
  if (!r) return out;
  for (const part of [r.ac, r.noise]) {
    if (!part) continue;
    for (const v of Object.values(part)) {
      if (!ArrayBuffer.isView(v) || (memory && v.buffer === memory.buffer) || out.includes(v.buffer)) continue;
      out.push(v.buffer);
    }
  }
  return out;
}

async function start(msg) {
  const t0 = performance.now();
  const go = new Go();
  const ready = new Promise((resolve) => {
    self.stagewrightReady = resolve;
  });
  let module;
  let instance;
  if (msg.module) {
    module = msg.module;
    instance = await WebAssembly.instantiate(module, go.importObject);
  } else {
    ({ module, instance } = await instantiate(msg.gz, go.importObject));
  }
  memory = instance.exports.mem instanceof WebAssembly.Memory ? instance.exports.mem : null;
  go.run(instance).then(() => {
    self.postMessage({ type: 'fatal', message: 'the Go runtime stopped' });
  });
  await ready;
  api = self.stagewright;
  if (!api || typeof api.evaluate !== 'function') throw new Error('the WebAssembly module did not register globalThis.stagewright');
  // The compiled module goes back with the answer, so that the page can
  // start a second engine without compiling again.
  self.postMessage({ type: 'ready', version: String(api.version), initMs: performance.now() - t0, module });
}

self.onmessage = (e) => {
  const msg = e.data || {};
  if (msg.type === 'init') {
    start(msg).catch((err) => self.postMessage({ type: 'fatal', message: String((err && err.message) || err) }));
    return;
  }
  if (msg.type === 'call') {
    const t0 = performance.now();
    let response;
    try {
      const fn = api && api[msg.method];
      if (typeof fn !== 'function') response = { error: { code: 'request', message: `no method ${msg.method}` } };
      else response = fn(...(msg.args || []));
    } catch (err) {
      response = { error: { code: 'internal', message: String((err && err.message) || err) } };
    }
    self.postMessage({ type: 'reply', id: msg.id, response, ms: performance.now() - t0 }, seriesBuffers(response));
  }
};
