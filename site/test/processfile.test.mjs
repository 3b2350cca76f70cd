// Unit tests of the page's process-file reader and writer
// (site/src/process/file.js) and the plots' curve alignment (no browser).
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { readFileSync } from 'node:fs';
import { join, dirname } from 'node:path';
import { fileURLToPath } from 'node:url';
import { syntaxErrorOffset, lineColumn, readProcessFile, writeProcessFile, sideFragment, processFragment } from '../src/process/file.js';
import { alignCurves, splitLabels } from '../src/process/plots.js';

const known = { bases: ['d180', 'd65'], params: ['body', 'thresh', 'mobility', 'dibl'] };

test('the scanner finds the offset where the engine\'s own JSON.parse stops, wherever JSON.parse names one', () => {
  // The outside reference is V8's JSON.parse: where its message gives a
  // position, the scanner must give the same one.
  const texts = ['{\n "a": 1,\n}', '{"a": 1', '[1,2]]', '{"a":"b\nc"}', '{\n  "name": "x" "base": 1}', '{"a": 01}', '{"a" 1}', '[1,]', '{"a": "\\x"}', '  {"a": [true, fals]}'];
  let compared = 0;
  for (const t of texts) {
    let pos = null;
    try {
      JSON.parse(t);
      assert.fail(`${JSON.stringify(t)} parsed`);
    } catch (err) {
      const m = /at position (\d+)/.exec(err.message);
      if (m) pos = Number(m[1]);
    }
    const off = syntaxErrorOffset(t);
    assert.ok(off >= 0, `no error found in ${JSON.stringify(t)}`);
    if (pos !== null) {
      assert.equal(off, pos, JSON.stringify(t));
      compared++;
    }
  }
  assert.ok(compared >= 5, `only ${compared} positions to compare with`);
  for (const good of ['{}', '[]', ' {"a": [1, -2.5e-3, "x\\u00b5", null, false]} ', '0']) assert.equal(syntaxErrorOffset(good), -1, good);
  assert.deepEqual(lineColumn('ab\ncd\nef', 4), { line: 2, column: 2 });
  assert.deepEqual(lineColumn('ab', 0), { line: 1, column: 1 });
});

test('a written process file reads back the same, and reads as core/procfile\'s own layout', () => {
  const f = {
    name: 'fab 1', title: 'a test', base: 'd65', vdd: 1.2, n: { thresh: 0.41, mobility: 0.031, body: 0.5 }, p: {},
    n_bins: [{ l: 1.8e-7, params: { thresh: 0.43 } }, { l: 1e-6, params: { dibl: 2e-9 } }], p_bins: [],
    source: { n: { file: 'x.csv', fingerprint: 'fnv1a64:00ff', points: 700 } }, fit: { n: { points: 644, iterations: 12, fit: { id_rms_pct: 1.5 }, findings: ['a sentence'] } },
  };
  const back = readProcessFile(writeProcessFile(f), known);
  assert.deepEqual(back, f);
  // The command line's own writer's layout (core/procfile AppendJSON, two
  // spaces a level, parameters on one line).
  const text = writeProcessFile(f);
  assert.match(text, /^{\n {2}"format": "stagewright-process",\n {2}"version": 1,\n {2}"name": "fab 1",/);
  assert.match(text, /\n {2}"n": {"body": 0.5, "mobility": 0.031, "thresh": 0.41},\n/);
  assert.match(text, /\n {4}{"l": 1.8e-7, "params": {"thresh": 0.43}},\n/);
});

test('bad process files are named by line and column or by member', () => {
  const ok = { format: 'stagewright-process', version: 1, name: 'x', base: 'd180', n: { thresh: 0.4 } };
  const cases = [
    ['{\n  "format": "stagewright-process"\n  "version": 1}', /: line 3, column 3: not JSON/],
    ['', /empty/],
    ['[1]', /not one JSON object/],
    [JSON.stringify({ ...ok, extra: 1 }), /: extra: unknown member/],
    [JSON.stringify({ ...ok, format: 'x' }), /: format: /],
    [JSON.stringify({ ...ok, version: 2 }), /: version: /],
    [JSON.stringify({ ...ok, name: 'a&b' }), /: name: /],
    [JSON.stringify({ ...ok, base: 'd7' }), /: base: unknown base process "d7" \(give one of d180, d65\)/],
    [JSON.stringify({ ...ok, n: { vt0: 0.4 } }), /: n\.vt0: unknown parameter/],
    [JSON.stringify({ ...ok, n: { thresh: '0.4' } }), /: n\.thresh: expected a number/],
    [JSON.stringify({ ...ok, n_bins: [{ l: 1e-6, params: {} }, { l: 5e-7, params: {} }] }), /: n_bins\[1\]\.l: bins must rise/],
    [JSON.stringify({ ...ok, source: { q: {} } }), /: source\.q: give n or p/],
  ];
  // (a RegExp is matched against "Error: message", hence the ": " before each)
  for (const [text, want] of cases) assert.throws(() => readProcessFile(text, known), want, text.slice(0, 60));
});

test('fragments keep only what differs from the base, and every bin key that differs from its set', () => {
  const defaults = new Map([['n.thresh', 0.45], ['n.mobility', 0.03], ['n.body', 0.45], ['p.thresh', 0.45]]);
  const f = { base: 'd180', vdd: 0, n: { thresh: 0.41, mobility: 0.03, body: 0.5 }, p: {}, n_bins: [{ l: 1.8e-7, params: { thresh: 0.41, mobility: 0.029 } }], p_bins: [] };
  assert.equal(sideFragment(f, 'n', defaults), 'n.body=0.5&n.thresh=0.41&n.mobility@1.8e-7=0.029');
  assert.equal(processFragment({ ...f, vdd: 1.7 }, defaults), 'v=2&proc=d180&vdd=1.7&n.body=0.5&n.thresh=0.41&n.mobility@1.8e-7=0.029');
  assert.equal(sideFragment(f, 'p', defaults), '');
});

test('curves on one x axis: the union of their x values, null where a curve has no point or a log axis cannot show one', () => {
  const out = alignCurves([
    { label: 'a', x: [0, 1, 2], data: [1, 2, 3], model: [1.1, 2.1, 3.1] },
    { label: 'b', x: [1.5, 2], data: [-1, 5], model: [4, null] },
  ], { yLog: true });
  assert.deepEqual(out, [[0, 1, 1.5, 2], [1, 2, null, 3], [1.1, 2.1, null, 3.1], [null, null, null, 5], [null, null, 4, null]]);
  assert.deepEqual(alignCurves([{ x: [0, 1], data: [1, 2], model: [1, 2] }], { xLog: true })[0], [1]);
  assert.deepEqual(splitLabels(['L=180 nm VDS=1.80 V VBS=0.00 V', 'L=350 nm VDS=1.80 V VBS=0.00 V']), { labels: ['L=180 nm', 'L=350 nm'], common: 'VDS=1.80 V, VBS=0.00 V' });
  assert.deepEqual(splitLabels(['only one']), { labels: ['only one'], common: '' });
});

test('the demo characterization files are marked as demo data', () => {
  const here = dirname(fileURLToPath(import.meta.url));
  for (const f of ['demo_n.csv', 'demo_p.csv']) assert.match(readFileSync(join(here, '..', '..', 'testdata', 'chardata', f), 'utf8'), /^# DEMO DATA, invented/);
});
