// Runs inside a Worker started from a Blob URL. wasm_exec.js (the Go
// runtime's JavaScript half, copied from the Go installation at build time)
// is prepended to this file by build.mjs, so `Go` is defined here.
//
// Protocol (postMessage):
//   page → worker  {type:'init', gz: ArrayBuffer (gzip of the .wasm), version}
//   worker → page  {type:'ready', version, initMs} | {type:'fatal', message}
//   page → worker  {type:'call', id, method, args}
//   worker → page  {type:'reply', id, response, ms}
/* global Go */

let api = null;

async function gunzip(buf) {
  const stream = new Blob([buf]).stream().pipeThrough(new DecompressionStream('gzip'));
  return new Response(stream).arrayBuffer();
}

async function start(msg) {
  const t0 = performance.now();
  const bytes = await gunzip(msg.gz);
  const go = new Go();
  const ready = new Promise((resolve) => {
    self.stagewrightReady = resolve;
  });
  const { instance } = await WebAssembly.instantiate(bytes, go.importObject);
  go.run(instance).then(() => {
    self.postMessage({ type: 'fatal', message: 'the Go runtime stopped' });
  });
  await ready;
  api = self.stagewright;
  if (!api || typeof api.evaluate !== 'function') throw new Error('the WebAssembly module did not register globalThis.stagewright');
  self.postMessage({ type: 'ready', version: String(api.version), initMs: performance.now() - t0 });
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
    self.postMessage({ type: 'reply', id: msg.id, response, ms: performance.now() - t0 });
  }
};
