// Process files, Stagewright's own JSON form of a user's process, read and
// written in the page (the engine carries no JSON reader). The layout is the
// one core/procfile writes and the command line reads:
//   {"format": "stagewright-process", "version": 1, "name", "title", "base",
//    "vdd", "n": {key: value}, "p": {…}, "n_bins": [{"l", "params"}], "p_bins",
//    "source": {"n": {"file", "fingerprint", "points"}}, "fit": {"n": report}}
// This module checks the form (JSON syntax by line and column, members,
// types, parameter names, base); the values' ranges are the engine's to
// judge, through the fragment this module builds (processFragment).

export const FORMAT = 'stagewright-process';
export const VERSION = 1;
export const MAX_BYTES = 1 << 20; // as core/procfile
const MEMBERS = ['format', 'version', 'name', 'title', 'base', 'vdd', 'n', 'p', 'n_bins', 'p_bins', 'source', 'fit'];

/** A problem with a process file: field names the member ("n.thresh", "n_bins[1].l"), or the message names line and column. */
export class ProcessFileError extends Error {
  constructor(message, field = '') {
    super(field ? `${field}: ${message}` : message);
    this.field = field;
  }
}

/** The 1-based line and column (in characters) of offset off in text. */
export function lineColumn(text, off) {
  const before = text.slice(0, Math.max(0, Math.min(off, text.length)));
  const nl = before.lastIndexOf('\n');
  return { line: before.split('\n').length, column: before.length - nl };
}

/**
 * The offset where text stops being JSON (the engine's JSON.parse does not
 * always say where): a small scanner of the JSON grammar. -1 when it is JSON.
 */
export function syntaxErrorOffset(text) {
  let i = 0;
  const ws = () => {
    while (i < text.length && ' \t\n\r'.includes(text[i])) i++;
  };
  const fail = () => {
    throw i;
  };
  const lit = (w) => {
    if (text.startsWith(w, i)) i += w.length;
    else fail();
  };
  const str = () => {
    i++; // the opening quote
    for (;;) {
      if (i >= text.length) fail();
      const c = text.charCodeAt(i);
      if (c === 34) return void i++;
      if (c < 32) fail();
      if (c === 92) {
        i++;
        if (text[i] === 'u') {
          if (!/^[0-9a-fA-F]{4}$/.test(text.slice(i + 1, i + 5))) fail();
          i += 5;
        } else if ('"\\/bfnrt'.includes(text[i] || 'x')) i++;
        else fail();
      } else i++;
    }
  };
  const value = () => {
    ws();
    const c = text[i];
    if (c === '{' || c === '[') {
      const close = c === '{' ? '}' : ']';
      i++;
      ws();
      if (text[i] === close) return void i++;
      for (;;) {
        if (c === '{') {
          ws();
          if (text[i] !== '"') fail();
          str();
          ws();
          if (text[i] !== ':') fail();
          i++;
        }
        value();
        ws();
        if (text[i] === ',') i++;
        else if (text[i] === close) return void i++;
        else fail();
      }
    }
    if (c === '"') return str();
    if (c === 't') return lit('true');
    if (c === 'f') return lit('false');
    if (c === 'n') return lit('null');
    const m = /^-?(0|[1-9]\d*)(\.\d+)?([eE][+-]?\d+)?/.exec(text.slice(i, i + 400));
    if (!m) fail();
    i += m[0].length;
  };
  try {
    value();
    ws();
    return i < text.length ? i : -1;
  } catch (at) {
    if (typeof at !== 'number') throw at;
    return at;
  }
}

const isObject = (v) => v !== null && typeof v === 'object' && !Array.isArray(v);

/**
 * Reads a process file's text. known: {bases: ['d180', …], params: ['body', …]}.
 * Returns {name, title, base, vdd, n, p, n_bins, p_bins, source, fit}; throws
 * ProcessFileError naming the line and column or the member.
 */
export function readProcessFile(text, known) {
  if (text.length > MAX_BYTES) throw new ProcessFileError(`the file is ${text.length} characters; a process file is at most ${MAX_BYTES}`);
  let j;
  try {
    j = JSON.parse(text);
  } catch (err) {
    const given = /at position (\d+)/.exec(err.message);
    const off = given ? Number(given[1]) : syntaxErrorOffset(text);
    const { line, column } = lineColumn(text, off < 0 ? text.length : off);
    const why = String(err.message).replace(/ in JSON at position \d+.*$/, '').replace(/, ".*" is not valid JSON$/, '');
    throw new ProcessFileError(text.trim() === '' ? 'the file is empty' : `line ${line}, column ${column}: not JSON (${why})`);
  }
  if (!isObject(j)) throw new ProcessFileError('not a Stagewright process file (the file is not one JSON object)');
  for (const k of Object.keys(j)) if (!MEMBERS.includes(k)) throw new ProcessFileError(`unknown member (a process file has ${MEMBERS.join(', ')})`, k);
  if (j.format !== FORMAT) throw new ProcessFileError(`not a Stagewright process file (want "format": "${FORMAT}")`, 'format');
  if (j.version !== VERSION) throw new ProcessFileError(`this page reads process files of version ${VERSION}`, 'version');
  const text_ = (k, max) => {
    const v = j[k] ?? '';
    if (typeof v !== 'string') throw new ProcessFileError('expected a string', k);
    if (v.length > max) throw new ProcessFileError(`at most ${max} characters`, k);
    return v;
  };
  const name = text_('name', 64);
  if (name === '' || /[&=#%\n\r\t]/.test(name)) throw new ProcessFileError('give a name of 1 … 64 characters without & = # % or line breaks', 'name');
  const title = text_('title', 200);
  const base = text_('base', 40);
  if (!known.bases.includes(base)) throw new ProcessFileError(`unknown base process ${JSON.stringify(base)} (give one of ${known.bases.join(', ')})`, 'base');
  const vdd = j.vdd ?? 0;
  if (typeof vdd !== 'number') throw new ProcessFileError('expected a number (0 for the base process\'s supply)', 'vdd');
  const params = (v, field) => {
    if (v === undefined || v === null) return {};
    if (!isObject(v)) throw new ProcessFileError('expected an object of parameters by name', field);
    const out = {};
    for (const [k, x] of Object.entries(v)) {
      if (!known.params.includes(k)) throw new ProcessFileError('unknown parameter', `${field}.${k}`);
      if (typeof x !== 'number') throw new ProcessFileError('expected a number', `${field}.${k}`);
      out[k] = x;
    }
    return out;
  };
  const file = { name, title, base, vdd, n: params(j.n, 'n'), p: params(j.p, 'p'), n_bins: [], p_bins: [], source: {}, fit: {} };
  for (const pol of ['n', 'p']) {
    const key = `${pol}_bins`;
    const bins = j[key] ?? [];
    if (!Array.isArray(bins)) throw new ProcessFileError('expected a list of {"l", "params"}', key);
    bins.forEach((b, i) => {
      const f = `${key}[${i}]`;
      if (!isObject(b) || typeof b.l !== 'number') throw new ProcessFileError('expected {"l": length in m, "params": {…}}', f);
      for (const k of Object.keys(b)) if (k !== 'l' && k !== 'params') throw new ProcessFileError('unknown member', `${f}.${k}`);
      if (i > 0 && !(b.l > bins[i - 1].l)) throw new ProcessFileError('bins must rise in length', `${f}.l`);
      file[key].push({ l: b.l, params: params(b.params, `${f}.params`) });
    });
  }
  for (const part of ['source', 'fit']) {
    const v = j[part] ?? {};
    if (!isObject(v)) throw new ProcessFileError('expected an object by polarity (n, p)', part);
    for (const [pol, x] of Object.entries(v)) {
      if (pol !== 'n' && pol !== 'p') throw new ProcessFileError('give n or p', `${part}.${pol}`);
      if (!isObject(x)) throw new ProcessFileError('expected an object', `${part}.${pol}`);
      file[part][pol] = x;
    }
  }
  return file;
}

/** The file's text, laid out as core/procfile writes it (two spaces a level, parameters sorted). */
export function writeProcessFile(f) {
  const q = JSON.stringify;
  const params = (m) => `{${Object.keys(m || {}).sort().map((k) => `${q(k)}: ${q(m[k])}`).join(', ')}}`;
  const lines = [`{\n  "format": ${q(FORMAT)},\n  "version": ${VERSION}`];
  for (const k of ['name', 'title', 'base']) lines.push(`  ${q(k)}: ${q(f[k] || '')}`);
  lines.push(`  "vdd": ${q(f.vdd || 0)}`);
  for (const pol of ['n', 'p']) {
    lines.push(`  ${q(pol)}: ${params(f[pol])}`);
    const bins = f[`${pol}_bins`] || [];
    lines.push(`  "${pol}_bins": [${bins.map((b) => `\n    {"l": ${q(b.l)}, "params": ${params(b.params)}}`).join(',')}${bins.length ? '\n  ' : ''}]`);
  }
  for (const part of ['source', 'fit']) {
    const pols = ['n', 'p'].filter((pol) => f[part] && f[part][pol]);
    lines.push(`  ${q(part)}: {${pols.map((pol) => `\n    ${q(pol)}: ${q(f[part][pol])}`).join(',')}${pols.length ? '\n  ' : ''}}`);
  }
  return `${lines.join(',\n')}\n}\n`;
}

/**
 * The overrides of one polarity as fragment pairs: every parameter that
 * differs from the base (defaults: Map 'n.thresh' → the base's value), then
 * every bin parameter that differs from the polarity's set, as n.KEY@L.
 * Numbers as JavaScript writes them (shortest form that reads back exactly).
 */
export function sideFragment(f, pol, defaults) {
  const out = [];
  const set = {};
  for (const [k, v] of Object.entries(f[pol] || {}).sort(([a], [b]) => (a < b ? -1 : 1))) {
    set[k] = v;
    if (v !== defaults.get(`${pol}.${k}`)) out.push(`${pol}.${k}=${v}`);
  }
  for (const b of f[`${pol}_bins`] || []) {
    for (const [k, v] of Object.entries(b.params).sort(([x], [y]) => (x < y ? -1 : 1))) {
      if (v !== (k in set ? set[k] : defaults.get(`${pol}.${k}`))) out.push(`${pol}.${k}@${b.l}=${v}`);
    }
  }
  return out.join('&');
}

/** The fragment that puts a design on the file's process: v=2&proc=BASE[&vdd=…]&n.…&p.… */
export function processFragment(f, defaults) {
  const parts = [`v=2&proc=${f.base}`];
  if (f.vdd) parts.push(`vdd=${f.vdd}`);
  for (const pol of ['n', 'p']) {
    const s = sideFragment(f, pol, defaults);
    if (s) parts.push(s);
  }
  return parts.join('&');
}
