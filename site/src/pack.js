// Text packing of binary data for the single-file page: bytes ↔ a string of
// ASCII characters that can sit verbatim inside an HTML raw-text element
// (<script type="application/octet-stream">), one byte of the file per
// character.
//
// Inside a raw-text element the HTML parser changes only three ASCII
// characters: NUL becomes U+FFFD, CR (alone or before LF) becomes LF, and '<'
// may start "</script" or "<!--". The other 125 code points 0x01–0x7F pass
// through unchanged, so the alphabet is those 125, in code-point order.
//
// Every 6 bytes (48 bits, big-endian) are written as 7 base-125 digits, most
// significant first: 125⁷ ≈ 4.77e14 ≥ 2⁴⁸ ≈ 2.81e14, and every intermediate
// value stays below 2⁵³, so plain JavaScript numbers are exact. A tail of
// r = 1..5 bytes is written as r + 1 digits (125^(r+1) ≥ 256^r for each r).
// The length therefore needs no header: with L characters, L mod 7 is 0 or
// r + 1 ≥ 2, never 1, and the data is 6·⌊L/7⌋ + max(L mod 7 − 1, 0) bytes.
// Output is 7/6 ≈ 1.167 characters per byte (base64: 4/3).
//
// The text may begin or end with whitespace-class characters (TAB, LF, FF,
// space are digits): never trim it. decode rejects any character outside the
// alphabet and any group whose value does not fit its byte count.

const BASE = 125;
const TWO24 = 0x1000000;

/** DIGIT_CHAR[d] is the character code of digit d. */
const DIGIT_CHAR = new Uint8Array(BASE);
/** CHAR_DIGIT[b] is the digit of byte b, or 0x100 if b is not in the alphabet. */
const CHAR_DIGIT = new Uint16Array(256).fill(0x100);
for (let c = 1, d = 0; c < 128; c++) {
  if (c === 0x0d || c === 0x3c) continue; // CR, '<'
  DIGIT_CHAR[d] = c;
  CHAR_DIGIT[c] = d;
  d++;
}

/** The character codes that never occur in packed text. */
export const UNSAFE_CODES = Object.freeze([0x00, 0x0d, 0x3c]);

/** Number of characters pack writes for n bytes. */
export function packedLength(n) {
  const r = n % 6;
  return 7 * ((n - r) / 6) + (r ? r + 1 : 0);
}

/**
 * Packs bytes (Uint8Array or Buffer) into a string of the 125-character
 * alphabet (see the file comment).
 */
export function pack(bytes) {
  const n = bytes.length;
  const out = new Uint8Array(packedLength(n));
  let o = 0;
  const group = (start, count, digits) => {
    let v = 0;
    for (let k = 0; k < count; k++) v = v * 256 + bytes[start + k];
    for (let k = digits - 1; k >= 0; k--) {
      const q = Math.floor(v / BASE);
      out[o + k] = DIGIT_CHAR[v - q * BASE];
      v = q;
    }
    o += digits;
  };
  const whole = n - (n % 6);
  for (let i = 0; i < whole; i += 6) group(i, 6, 7);
  if (whole < n) group(whole, n - whole, n - whole + 1);
  // Every code is < 128, so latin1 and ASCII agree; decode in chunks to
  // keep String.fromCharCode's argument count small.
  let s = '';
  for (let i = 0; i < out.length; i += 0x8000) s += String.fromCharCode.apply(null, out.subarray(i, i + 0x8000));
  return s;
}

/**
 * Unpacks text written by pack (a string, or its bytes as a Uint8Array) into
 * a new Uint8Array. Throws an Error saying where when the text has a
 * character outside the alphabet, an impossible length, or a group too large
 * for its bytes.
 */
export function unpack(text) {
  // One native pass turns the string into bytes; characters outside ASCII
  // become bytes ≥ 0x80, which the table marks invalid.
  const src = typeof text === 'string' ? new TextEncoder().encode(text) : text;
  const len = src.length;
  const tailChars = len % 7;
  if (tailChars === 1) throw new Error(`unpack: ${firstProblem(src) || `length ${len} leaves a 1-character tail (7k, or 7k + 2..6 expected)`}`);
  const groups = (len - tailChars) / 7;
  const out = new Uint8Array(groups * 6 + (tailChars ? tailChars - 1 : 0));
  const digit = CHAR_DIGIT;
  let bad = 0; // OR of every digit and overflow bit: > 0xff means invalid
  let i = 0;
  let o = 0;
  for (let g = 0; g < groups; g++) {
    const d0 = digit[src[i]], d1 = digit[src[i + 1]], d2 = digit[src[i + 2]], d3 = digit[src[i + 3]];
    const d4 = digit[src[i + 4]], d5 = digit[src[i + 5]], d6 = digit[src[i + 6]];
    bad |= d0 | d1 | d2 | d3 | d4 | d5 | d6;
    // v < 125⁷ < 2⁴⁹: exact. hi = ⌊v / 2²⁴⌋ is exact too (a power of two).
    const v = (((((d0 * BASE + d1) * BASE + d2) * BASE + d3) * BASE + d4) * BASE + d5) * BASE + d6;
    const hi = Math.floor(v / TWO24);
    const lo = v - hi * TWO24;
    bad |= hi & ~0xffffff; // v ≥ 2⁴⁸
    out[o] = hi >>> 16; out[o + 1] = hi >>> 8; out[o + 2] = hi;
    out[o + 3] = lo >>> 16; out[o + 4] = lo >>> 8; out[o + 5] = lo;
    i += 7;
    o += 6;
  }
  if (tailChars) {
    const r = tailChars - 1;
    let v = 0;
    for (let k = 0; k < tailChars; k++) {
      const d = digit[src[i + k]];
      bad |= d;
      v = v * BASE + d;
    }
    if (v >= 2 ** (8 * r)) bad |= 0x100;
    for (let k = r - 1; k >= 0; k--) {
      const q = Math.floor(v / 256);
      out[o + k] = v - q * 256;
      v = q;
    }
  }
  if (bad > 0xff) throw new Error(`unpack: ${firstProblem(src) || 'a group of digits is too large for its bytes (not text written by pack)'}`);
  return out;
}

// Only on the error path: says which character is wrong, or '' if none is.
function firstProblem(src) {
  for (let i = 0; i < src.length; i++) {
    if (CHAR_DIGIT[src[i]] > 0xff) return `UTF-8 byte ${i} of the text (0x${src[i].toString(16).padStart(2, '0')}) is not in the alphabet`;
  }
  return '';
}
