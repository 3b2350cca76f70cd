// Unit tests of the single file's text packing of the engine (src/pack.js).
import { test } from 'node:test';
import assert from 'node:assert/strict';
import { randomBytes } from 'node:crypto';
import { pack, unpack, packedLength, UNSAFE_CODES } from '../src/pack.js';

// The characters an HTML raw-text element changes or may end on: NUL
// (→ U+FFFD), CR (→ LF) and '<' (could start "</script" or "<!--"), as the
// HTML tokenizer's script-data states and input-stream preprocessing say.
const UNSAFE = new Set([0x00, 0x0d, 0x3c]);

function checkText(s, what) {
  for (let i = 0; i < s.length; i++) {
    const c = s.charCodeAt(i);
    assert.ok(c < 0x80 && !UNSAFE.has(c), `${what}: character ${i} is U+${c.toString(16)}`);
  }
}

function roundTrip(bytes, what) {
  const s = pack(bytes);
  assert.equal(s.length, packedLength(bytes.length), `${what}: length`);
  checkText(s, what);
  const back = unpack(s);
  assert.ok(back instanceof Uint8Array, `${what}: not a Uint8Array`);
  assert.equal(Buffer.compare(Buffer.from(back), Buffer.from(bytes)), 0, `${what}: bytes differ after the round trip`);
  return s;
}

test('the unsafe set is what the module excludes', () => {
  assert.deepEqual([...UNSAFE_CODES].sort(), [...UNSAFE].sort());
});

test('pack round-trips random buffers of every length 0..64', () => {
  for (let n = 0; n <= 64; n++) {
    for (let k = 0; k < 20; k++) roundTrip(randomBytes(n), `length ${n}`);
  }
});

test('pack round-trips extreme groups: all zero and all 0xff bytes of every length 0..64', () => {
  // 0xff…ff is the largest value of each group (2⁴⁸ − 1 and 256^r − 1 for
  // a tail of r bytes), so the digit count must just suffice.
  for (let n = 0; n <= 64; n++) {
    roundTrip(new Uint8Array(n), `zeros ${n}`);
    roundTrip(new Uint8Array(n).fill(0xff), `0xff ${n}`);
  }
});

test('pack round-trips every byte value in every position of a group', () => {
  for (let shift = 0; shift < 6; shift++) {
    const b = new Uint8Array(256 + shift);
    for (let v = 0; v < 256; v++) b[shift + v] = v;
    roundTrip(b, `0..255 after ${shift} zeros`);
  }
  const same = new Uint8Array(256 * 6);
  for (let v = 0; v < 256; v++) same.fill(v, v * 6, v * 6 + 6); // six equal bytes: one group per value
  roundTrip(same, 'groups of one value');
});

test('pack round-trips a few MB of random bytes at 7/6 characters per byte', () => {
  for (const n of [3 << 20, (3 << 20) + 1, (1 << 20) + 5]) {
    const b = randomBytes(n);
    const s = roundTrip(b, `${n} bytes`);
    // 7 characters per 6 bytes, plus at most one character for the tail.
    assert.ok(s.length <= Math.ceil((n * 7) / 6) + 1, `${n} bytes gave ${s.length} characters`);
  }
});

test('pack output may start and end with whitespace, and is kept as is', () => {
  // The digit for a value v is the v-th safe code point from U+0001, so
  // small values give control characters and TAB/LF: find bytes whose
  // packing starts with a space-class character and check it survives.
  const s = pack(new Uint8Array([0, 0, 0, 0, 0, 0, 0]));
  assert.equal(s.charCodeAt(0), 0x01);
  const tab = pack(new Uint8Array(6).fill(0)).slice(0, 6) + '\t'; // the digit 8 is TAB
  assert.deepEqual([...unpack(tab)], [0, 0, 0, 0, 0, 8]);
});

test('unpack rejects text that pack cannot write, saying why', () => {
  const good = pack(randomBytes(12));
  const cases = [
    [good.slice(0, 7) + 'a', /1-character tail/],
    [good.slice(0, 6) + '<', /not in the alphabet/],
    [good.slice(0, 6) + '\r', /not in the alphabet/],
    [good.slice(0, 6) + '\0', /not in the alphabet/],
    [good.slice(0, 6) + '\u00b5', /not in the alphabet/],
    [good.slice(0, 6) + '\ufffd', /not in the alphabet/],
    ['\x7f'.repeat(7), /too large/], // 125⁷ − 1 > 2⁴⁸ − 1
    ['\x7f\x7f', /too large/], // a 1-byte tail with value 125² − 1 > 255
  ];
  for (const [text, re] of cases) assert.throws(() => unpack(text), re, JSON.stringify(text));
});
