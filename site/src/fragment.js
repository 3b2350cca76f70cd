// The URL fragment as an ordered list of key=value pairs. This module only
// splits and joins; the Go core decides what the keys mean and reports
// problems, so the page never second-guesses the codec.

/** Splits "a=1&b=2" (with or without '#') into [[key, value], …], percent-decoded where possible. */
export function splitFragment(fragment) {
  let s = String(fragment || '');
  if (s.startsWith('#')) s = s.slice(1);
  if (s === '') return [];
  return s.split('&').map((pair) => {
    const eq = pair.indexOf('=');
    const k = eq < 0 ? pair : pair.slice(0, eq);
    const v = eq < 0 ? '' : pair.slice(eq + 1);
    return [decode(k), decode(v)];
  });
}

function decode(s) {
  try {
    return decodeURIComponent(s);
  } catch {
    return s;
  }
}

/** Joins pairs into a fragment (no '#'), escaping only what would break the pair syntax. */
export function joinFragment(pairs) {
  return pairs.map(([k, v]) => `${escapePart(k)}=${escapePart(v)}`).join('&');
}

function escapePart(s) {
  return String(s).replace(/[%&=#\s]/g, (c) => encodeURIComponent(c)).replace(/[^\x21-\x7e]/g, (c) => encodeURIComponent(c));
}

/** Returns a Map key → value of the pairs (first occurrence wins, as in the codec). */
export function fragmentMap(fragment) {
  const m = new Map();
  for (const [k, v] of splitFragment(fragment)) if (!m.has(k)) m.set(k, v);
  return m;
}

/** Returns the fragment with `key` set to `value` (appended when absent). */
export function withKey(fragment, key, value) {
  const pairs = splitFragment(fragment);
  let found = false;
  const out = [];
  for (const [k, v] of pairs) {
    if (k === key) {
      if (!found) out.push([k, value]);
      found = true;
    } else out.push([k, v]);
  }
  if (!found) out.push([key, value]);
  return joinFragment(out);
}
