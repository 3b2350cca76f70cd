// SI numbers as users type them and as the fragment carries them.
// parseSI("4.7k") === 4700; formatSI(4700, 4) === "4.700k".

// K is no SI prefix, but people type 20K for 20 k (as the core's units.Parse reads it).
const PREFIX = { f: -15, p: -12, n: -9, u: -6, 'µ': -6, 'μ': -6, m: -3, k: 3, K: 3, M: 6, G: 9, T: 12 };
const ORDER = [['f', -15], ['p', -12], ['n', -9], ['u', -6], ['m', -3], ['', 0], ['k', 3], ['M', 6], ['G', 9], ['T', 12]];
const NUMBER = /^([+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?)\s*([fpnuµμmkKMGT]?)$/;

/**
 * Parses a number with an optional SI prefix (f p n u µ m k M G T) and an
 * optional unit word after it, which is ignored when it matches `unit`
 * ("4.7kΩ", "2.2 pF"). Returns {value} or {error} with a sentence saying
 * what is wrong. Never returns NaN or Infinity as a value.
 */
export function parseSI(text, unit = '') {
  let s = String(text).trim();
  if (s === '') return { error: 'empty: type a number such as 4.7k or 180n' };
  if (unit && s.endsWith(unit)) s = s.slice(0, -unit.length).trim();
  if (s.length > 64) return { error: 'too long: at most 64 characters' };
  const m = NUMBER.exec(s);
  if (!m && /^[+-]?[\d.]+\s*meg(a)?$/i.test(s)) return { error: `“${short(text)}”: write M for mega` };
  if (!m) return { error: `“${short(text)}” is not a number; write e.g. 4.7k, 180n, 2.2p or 1e-6` };
  if (m[2] && /e/i.test(m[1])) return { error: `“${short(text)}”: write an exponent or a prefix, not both` };
  // Move the decimal point in the text so the value is rounded once, as
  // the core's units.Parse does (multiplying afterwards would round twice).
  const value = m[2] ? Number(`${m[1]}e${PREFIX[m[2]]}`) : Number(m[1]);
  if (!Number.isFinite(value)) return { error: `“${short(text)}” is too large` };
  return { value };
}

function short(t) {
  const s = String(t);
  return s.length > 24 ? s.slice(0, 24) + '…' : s;
}

function prefixFor(v, withTera = true) {
  const a = Math.abs(v);
  if (a === 0) return ['', 0];
  let chosen = ORDER[0];
  for (const p of ORDER) {
    if (!withTera && p[0] === 'T') break;
    if (a >= 10 ** p[1] * (1 - 1e-12)) chosen = p;
  }
  return chosen;
}

/**
 * Formats a value for reading, with `digits` significant digits and an SI
 * prefix: formatSI(4700) === "4.7k", formatSI(1.8e-7, 4) === "180n".
 * Non-finite values come back as the words "∞" or "—".
 */
export function formatSI(v, digits = 4, unit = '') {
  if (v === null || v === undefined || Number.isNaN(v)) return '—';
  if (v === Infinity) return '∞';
  if (v === -Infinity) return '−∞';
  // A gain is a plain ratio: 0.8418 V/V, never 841.8 mV/V.
  if (unit === 'V/V') return `${Number(v.toPrecision(digits)).toString().replace('-', '−')}\u2009V/V`;
  const [p, e] = prefixFor(v);
  let m = v / 10 ** e;
  let text = Number(m.toPrecision(digits)).toString();
  if (Math.abs(Number(text)) >= 1000 && p !== 'T') {
    // rounding pushed it to the next prefix (999.96k -> 1000k -> 1M)
    return formatSI(Number(v.toPrecision(digits)) * (1 + 1e-15), digits, unit);
  }
  text = text.replace('-', '−');
  return text + (p || unit ? '\u2009' : '') + (p === 'u' ? 'µ' : p) + unit;
}

/**
 * Writes a value for the fragment: the shortest SI form that reads back to
 * exactly the same float64 (like the core's units.Exact), ASCII only.
 */
export function exactSI(v) {
  if (!Number.isFinite(v)) return String(v);
  if (v === 0) return '0';
  // The core's units.Parse knows f p n u m k M G (no T) and e-notation.
  const a = Math.abs(v);
  if (a < 1e-15 || a >= 1e12) return v.toExponential().replace('e+', 'e');
  const [p, e] = prefixFor(v, false);
  for (let d = 1; d <= 17; d++) {
    const text = Number((v / 10 ** e).toPrecision(d)).toString();
    if (!/e/i.test(text) && Math.abs(Number(text)) < 1000) {
      const back = parseSI(text + p);
      if (back.value === v) return text + p;
    }
  }
  return v.toExponential().replace('e+', 'e');
}

/** Rounds a value to `digits` significant digits (for slider positions). */
export function roundSig(v, digits = 3) {
  if (!Number.isFinite(v) || v === 0) return v;
  return Number(v.toPrecision(digits));
}
