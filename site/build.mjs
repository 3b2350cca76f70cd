// Builds the page into dist/:
//   dist/index.html, app.js, app.css, stagewright.wasm.gz  (served by `make run`)
//   dist/stagewright.html  (one self-contained file that works opened from disk)
// Inputs made by web.mk: build/stagewright.wasm and build/wasm_exec.js (the
// Go runtime's JavaScript half, copied from the Go installation).
// Environment: STAGEWRIGHT_VERSION, the same string linked into the wasm.
import * as esbuild from 'esbuild';
import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync, writeFileSync, existsSync, readdirSync, rmSync } from 'node:fs';
import { gzipSync, gunzipSync } from 'node:zlib';
import zopfli from '@gfx/zopfli';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { pack } from './src/pack.js';

const here = dirname(fileURLToPath(import.meta.url));
const dist = process.env.STAGEWRIGHT_DIST || join(here, 'dist'); // another place only for tests
const buildDir = join(here, 'build');
const version = process.env.STAGEWRIGHT_VERSION || 'dev';
const wasmPath = process.env.STAGEWRIGHT_WASM || join(buildDir, 'stagewright.wasm');
const execPath = join(buildDir, 'wasm_exec.js');

function need(p, what) {
  if (!existsSync(p)) {
    console.error(`build.mjs: ${what} missing at ${p} (run make site)`);
    process.exit(1);
  }
}
need(wasmPath, 'the WebAssembly engine');
need(execPath, 'wasm_exec.js');
mkdirSync(dist, { recursive: true });

/**
 * The engine as gzip, made by zopfli (an exhaustive deflate search whose
 * output any gzip decoder reads): about 5 % smaller than zlib's level 9,
 * which the single file's size budget needs, but some seconds of work, so
 * the result is kept in build/ under the hash of the engine and made again
 * only when the engine changes. Checked by decompressing it again.
 */
async function compressEngine(wasm) {
  const key = createHash('sha256').update(wasm).digest('hex').slice(0, 16);
  const cached = join(buildDir, `stagewright.wasm.${key}.gz`);
  if (existsSync(cached)) return readFileSync(cached);
  const gz = await new Promise((resolve, reject) =>
    zopfli.gzip(wasm, { numiterations: 1 }, (err, out) => (err ? reject(err) : resolve(Buffer.from(out)))),
  );
  if (Buffer.compare(gunzipSync(gz), wasm) !== 0) {
    console.error('build.mjs: the compressed engine does not decompress to the engine');
    process.exit(1);
  }
  mkdirSync(buildDir, { recursive: true });
  for (const f of readdirSync(buildDir)) if (/^stagewright\.wasm\.[0-9a-f]{16}\.gz$/.test(f)) rmSync(join(buildDir, f));
  writeFileSync(cached, gz);
  return gz;
}

const t0 = performance.now();
const workerBundle = await esbuild.build({
  entryPoints: [join(here, 'src/worker.js')],
  bundle: true, format: 'iife', minify: true, write: false, target: 'es2022', legalComments: 'none',
});
// wasm_exec.js comes from the Go installation as readable source; minified
// it is 9 kB smaller in the single file (measured), with the same code.
const wasmExec = (await esbuild.transform(readFileSync(execPath, 'utf8'), { minify: true, target: 'es2022', legalComments: 'none' })).code;
const workerSource = `${wasmExec}\n${workerBundle.outputFiles[0].text}`;

const workerPlugin = {
  name: 'stagewright-worker',
  setup(b) {
    b.onResolve({ filter: /^stagewright:worker$/ }, () => ({ path: 'worker', namespace: 'stagewright' }));
    b.onLoad({ filter: /.*/, namespace: 'stagewright' }, () => ({ contents: workerSource, loader: 'text' }));
  },
};

const app = await esbuild.build({
  entryPoints: [join(here, 'src/main.js')],
  bundle: true, format: 'iife', minify: true, write: false, target: 'es2022', legalComments: 'none',
  outdir: dist, entryNames: 'app', plugins: [workerPlugin],
  define: { STAGEWRIGHT_VERSION: JSON.stringify(version) },
  metafile: true,
});
let js = '';
let css = '';
for (const f of app.outputFiles) {
  if (f.path.endsWith('.js')) js = f.text;
  else if (f.path.endsWith('.css')) css = f.text;
}
// An inline script ends at the first "</script"; esbuild escapes it in
// strings, but check, since the single file depends on it.
if (/<\/script/i.test(js)) {
  console.error('build.mjs: the bundle contains "</script", which would end the inline script early');
  process.exit(1);
}
// The names are assembled so that this check itself does not name them.
for (const banned of ['inner', 'outer', 'insertAdjacent'].map((p) => `${p}HTML`).concat([['document', 'write'].join('.')])) {
  if (js.includes(banned)) {
    console.error(`build.mjs: the bundle uses ${banned}; the page must build markup with DOM calls only`);
    process.exit(1);
  }
}

const wasm = readFileSync(wasmPath);
const gz = await compressEngine(wasm);
// The single file carries the gzip bytes as text, 7 characters per 6 bytes
// (src/pack.js; base64 would take 8).
const packed = pack(gz);
if (/[\0\r<]/.test(packed)) {
  console.error('build.mjs: the packed engine contains NUL, CR or "<", which the HTML parser would change');
  process.exit(1);
}
const sha = (s) => `'sha256-${createHash('sha256').update(s, 'utf8').digest('base64')}'`;
const template = readFileSync(join(here, 'index.html'), 'utf8');
const fill = (html, parts) => html.replace(/<!--(CSP|STYLE|WASM|SCRIPT)-->/g, (_, k) => parts[k]);

// Served page: files beside it.
const servedCSP = [
  "default-src 'none'", "script-src 'self' 'wasm-unsafe-eval'", "worker-src blob:", "style-src 'self'",
  "img-src 'self' data: blob:", "connect-src 'self'", "base-uri 'none'", "form-action 'none'",
].join('; ');
writeFileSync(join(dist, 'app.js'), js);
writeFileSync(join(dist, 'app.css'), css);
writeFileSync(join(dist, 'stagewright.wasm.gz'), gz);
writeFileSync(
  join(dist, 'index.html'),
  fill(template, {
    CSP: `<meta http-equiv="Content-Security-Policy" content="${servedCSP}">`,
    STYLE: '<link rel="stylesheet" href="app.css">',
    WASM: '',
    SCRIPT: '<script src="app.js"></script>',
  }),
);

// Single file: everything inline, allowed by hash; no request at all.
const singleCSP = [
  "default-src 'none'", `script-src ${sha(js)} 'wasm-unsafe-eval'`, 'worker-src blob:', `style-src ${sha(css)}`,
  'img-src data: blob:', "connect-src 'none'", "base-uri 'none'", "form-action 'none'",
].join('; ');
const single = fill(template, {
  CSP: `<meta http-equiv="Content-Security-Policy" content="${singleCSP}">`,
  STYLE: `<style>${css}</style>`,
  WASM: `<script type="application/octet-stream" id="stagewright-wasm">${packed}</script>`,
  SCRIPT: `<script>${js}</script>`,
});
writeFileSync(join(dist, 'stagewright.html'), single);

const kB = (n) => `${(n / 1024).toFixed(0)} KiB`;
const singleGz = gzipSync(Buffer.from(single), { level: 9 }).length;
console.log(`site built in ${(performance.now() - t0).toFixed(0)} ms (version ${version})`);
console.log(`  engine: ${kB(wasm.length)} raw, ${kB(gz.length)} gzip; page script ${kB(js.length)}, styles ${kB(css.length)}`);
console.log(`  single file ${join(dist, 'stagewright.html')}: ${kB(Buffer.byteLength(single))} raw, ${kB(singleGz)} gzip-compressed`);
