// Unit tests of the page's number and fragment helpers (no browser needed).
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { parseSI, formatSI, exactSI } from '../src/si.js';
import { splitFragment, withKey, fragmentMap } from '../src/fragment.js';

test('parseSI reads SI prefixes as written in the trade (common practice)', () => {
  const cases = [
    ['4.7k', 4700], ['180n', 180e-9], ['2.2p', 2.2e-12], ['10u', 10e-6], ['10µ', 10e-6], ['10μ', 10e-6],
    ['1M', 1e6], ['1G', 1e9], ['1T', 1e12], ['-0.5', -0.5], ['1e-3', 1e-3], [' 3.3m ', 3.3e-3], ['4.7kΩ', 4700],
  ];
  for (const [text, want] of cases) {
    const got = parseSI(text, 'Ω');
    // relative 1e-15: one rounding of the decimal scaling, about 4 ulp
    assert.ok(Math.abs(got.value - want) <= Math.abs(want) * 1e-15, `${text}: got ${got.value}, want ${want}`);
  }
});

test('parseSI rejects nonsense with a reason', () => {
  for (const text of ['', 'abc', '4k7', '1..2', 'NaN', 'Infinity', '1e999', '--1', '0x10', 'k']) {
    const got = parseSI(text);
    assert.equal(got.value, undefined, `${text} accepted as ${got.value}`);
    assert.match(got.error, /\w/);
  }
});

test('exactSI round-trips bit-exactly through parseSI', () => {
  let seed = 12345;
  const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
  for (let i = 0; i < 5000; i++) {
    const v = 10 ** (rnd() * 30 - 16) * (rnd() < 0.1 ? -1 : 1);
    const s = exactSI(v);
    assert.equal(parseSI(s).value, v, `${v} -> ${s}`);
    assert.doesNotMatch(s, /[^0-9a-zA-Z.\-]/, `non-ASCII or space in ${s}`);
  }
  assert.equal(exactSI(20e-6), '20u');
  assert.equal(exactSI(4700), '4.7k');
  assert.equal(exactSI(1e12), '1e12');
});

test('formatSI shows 4 significant digits with a prefix', () => {
  assert.equal(formatSI(4700, 4), '4.7\u2009k');
  assert.equal(formatSI(1.8e-7, 4, 'm'), '180\u2009nm');
  assert.equal(formatSI(999.96e3, 4), '1\u2009M');
  assert.equal(formatSI(null), '—');
  assert.equal(formatSI(Infinity), '∞');
  assert.equal(formatSI(-12.5), '−12.5');
});

test('fragment helpers keep the first of a repeated key and set keys', () => {
  assert.deepEqual(splitFragment('#a=1&b=%C2%B5&c'), [['a', '1'], ['b', 'µ'], ['c', '']]);
  assert.equal(fragmentMap('a=1&a=2').get('a'), '1');
  assert.equal(withKey('a=1&b=2', 'b', '3'), 'a=1&b=3');
  assert.equal(withKey('a=1', 'b', '3'), 'a=1&b=3');
});

test('sweep CSV from the hand-made fixture result has one row per frequency', async () => {
  const { sweepCSV } = await import('../src/export.js');
  const { readFileSync } = await import('node:fs');
  const r = JSON.parse(readFileSync(new URL('./fixtures/sample-result.json', import.meta.url), 'utf8'));
  const lines = sweepCSV(r).trim().split('\n');
  assert.equal(lines[1], 'f_hz,mag_db,phase_deg,zin_ohm,zout_ohm,noise_out_v_per_rthz,noise_in_v_per_rthz');
  // The fixture's noise frequencies are a subset of its AC frequencies, so
  // the rows are the AC points (2 header lines before them).
  assert.equal(lines.length - 2, r.ac.f.length);
  const first = lines[2].split(',');
  assert.equal(Number(first[0]), r.ac.f[0]);
  assert.equal(Number(first[1]), r.ac.mag_db[0]);
  assert.equal(first[5], String(r.noise.out[0]));
  const last = lines[lines.length - 1].split(',');
  assert.equal(last[5], '', 'noise column should be empty above the noise sweep');
});

test('page sources never turn text into markup or code', async () => {
  const { readdirSync, readFileSync } = await import('node:fs');
  const dir = new URL('../src/', import.meta.url);
  // assembled so this test does not name them itself
  const banned = ['inner', 'outer', 'insertAdjacent'].map((p) => `${p}HTML`).concat(['document' + '.write', 'ev' + 'al(', 'new ' + 'Function', ' on' + 'click=']); // spelt in pieces so this file does not match its own scan
  // every source file, the design-aid panels in src/aids/ included
  const files = readdirSync(dir, { recursive: true }).filter((f) => /\.(js|css)$/.test(f));
  assert.ok(files.length >= 10, `only ${files.length} source files found`);
  for (const f of [...files.map((x) => new URL(x, dir)), new URL('../index.html', import.meta.url)]) {
    const text = readFileSync(f, 'utf8');
    for (const b of banned) assert.ok(!text.includes(b), `${f.pathname} uses ${b}`);
  }
});

test('parseSI reads K as kilo and tells meg to be M, as the core does', () => {
  assert.equal(parseSI('20K').value, 20e3);
  assert.match(parseSI('1meg').error, /write M for mega/);
  assert.match(parseSI('1Meg').error, /write M for mega/);
});

test('a gain is written as a plain ratio, never with a prefix', () => {
  assert.equal(formatSI(0.8418, 4, 'V/V'), '0.8418\u2009V/V');
  assert.equal(formatSI(-7.0958, 4, 'V/V'), '−7.096\u2009V/V');
});
