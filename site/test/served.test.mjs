// The served page (dist/index.html with its files beside it), through the
// project's own loopback server as `make run` starts it.
import { test, before, after } from 'node:test';
import assert from 'node:assert/strict';
import { spawn, execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { launch, waitReady, dist } from './browser.mjs';

let server;
let binDir;
let base;
let b;

before(async () => {
  const root = join(dist, '..', '..');
  // Built first and run directly, so that stopping it stops the server itself.
  binDir = mkdtempSync(join(tmpdir(), 'stagewright-serve-'));
  const bin = join(binDir, 'serve');
  execFileSync('go', ['build', '-o', bin, './wasm/cmd/serve'], { cwd: root, stdio: 'inherit' });
  server = spawn(bin, ['-dir', dist, '-addr', '127.0.0.1:0'], { stdio: ['ignore', 'pipe', 'inherit'] });
  base = await new Promise((resolve, reject) => {
    let out = '';
    const timer = setTimeout(() => reject(new Error(`server did not start: ${out}`)), 60000);
    server.stdout.on('data', (d) => {
      out += d;
      const m = /served at (http:\/\/127\.0\.0\.1:\d+\/)/.exec(out);
      if (m) {
        clearTimeout(timer);
        resolve(m[1]);
      }
    });
    server.on('exit', (code) => reject(new Error(`server exited with ${code}: ${out}`)));
  });
  b = await launch();
});

after(async () => {
  if (b) await b.close();
  if (server) server.kill();
  if (binDir) rmSync(binDir, { recursive: true, force: true });
});

test('the served page loads its own files only and computes', async (t) => {
  const page = b.context.pages()[0] || (await b.context.newPage());
  const t0 = Date.now();
  await page.goto(`${base}#v=1&stage=sf&load=active`);
  await waitReady(page);
  t.diagnostic(`served page: first result after ${Date.now() - t0} ms`);
  assert.match(await page.textContent('#status'), /Computed/);
  assert.match(await page.textContent('#schematic title'), /source-follower/);
  const foreign = b.requests.filter((u) => !(u.startsWith(base) || u.startsWith('blob:') || u.startsWith('data:')));
  assert.deepEqual(foreign, []);
  for (const f of ['app.js', 'app.css', 'stagewright.wasm.gz']) assert.ok(b.requests.some((u) => u === base + f), `${f} not loaded`);
  assert.deepEqual(b.errors, []);
  assert.deepEqual(b.consoleErrors, []);
});
