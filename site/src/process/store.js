// The user's processes, kept in the browser (localStorage, so the list works
// offline and from the file opened from disk). One entry is one polarity of
// one process: what designing with it needs (base, supply, the fragment
// keys), what a process file needs (parameters, bins, source), and what the
// report shows (fit errors, findings, plots, table summary; a process read
// from a file without its data has no plots).

export const STORAGE_KEY = 'stagewright.processes.v1';
export const MAX_PROCESSES = 40;
export const MAX_NAME = 64; // as a process file's name

/** A name as it may be stored and written into a process file: one line, none of & = # %, at most MAX_NAME characters. */
export function cleanProcessName(text) {
  // eslint-disable-next-line no-control-regex
  return String(text ?? '').replace(/[\u0000-\u001f\u007f&=#%]+/g, ' ').replace(/\s+/g, ' ').trim().slice(0, MAX_NAME);
}

const num = (v) => (typeof v === 'number' && Number.isFinite(v) ? v : null);
const obj = (v) => (v && typeof v === 'object' && !Array.isArray(v) ? v : null);

/** Checks one stored entry's form; null when it is not one (a hand-edited or older store). */
export function cleanEntry(e) {
  if (!obj(e) || typeof e.fragment !== 'string' || e.fragment.length > 4096) return null;
  if (e.pol !== 'n' && e.pol !== 'p') return null;
  if (typeof e.base !== 'string' || !/^[a-z0-9]{1,16}$/.test(e.base)) return null;
  const params = {};
  for (const [k, v] of Object.entries(obj(e.params) || {})) if (num(v) !== null) params[k] = v;
  const bins = (Array.isArray(e.bins) ? e.bins : [])
    .filter((b) => obj(b) && num(b.l) !== null && obj(b.params))
    .map((b) => ({ l: b.l, params: Object.fromEntries(Object.entries(b.params).filter(([, v]) => num(v) !== null)) }));
  return {
    id: String(e.id || ''),
    name: cleanProcessName(e.name) || 'process',
    pol: e.pol,
    base: e.base,
    vdd: num(e.vdd) || 0,
    fragment: e.fragment,
    params,
    bins,
    source: obj(e.source),
    report: obj(e.report),
    plots: obj(e.plots),
    table: obj(e.table),
    options: typeof e.options === 'string' ? e.options : '',
    cancelled: e.cancelled === true,
    savedAt: typeof e.savedAt === 'string' ? e.savedAt : '',
  };
}

/** The stored list, or [] when there is none or it cannot be read. */
export function loadProcesses(storage) {
  try {
    const list = JSON.parse(storage.getItem(STORAGE_KEY) || '[]');
    return Array.isArray(list) ? list.map(cleanEntry).filter(Boolean).slice(0, MAX_PROCESSES) : [];
  } catch {
    return [];
  }
}

/** Stores the list; throws the storage's error (full, or not available). */
export function saveProcesses(storage, entries) {
  storage.setItem(STORAGE_KEY, JSON.stringify(entries));
}

/**
 * An entry from a finished fit (the fitStart job's result): file is the data
 * file's name, options the fitStart options it was made with.
 */
export function entryFromFit(fit, file, options) {
  const full = fit.params || {};
  const bins = (fit.bins || []).map((b) => ({
    l: b.l,
    // a bin keeps the parameters that differ from the polarity's set, as in a process file
    params: Object.fromEntries(Object.entries(b.params || {}).filter(([k, v]) => v !== full[k])),
  }));
  const stem = String(file || 'data').replace(/\.[a-z0-9]{1,5}$/i, '');
  return cleanEntry({
    name: cleanProcessName(stem) || 'process',
    pol: fit.pol,
    base: fit.base,
    vdd: 0,
    fragment: fit.fragment || '',
    params: full,
    bins,
    source: { file: String(file || ''), fingerprint: (fit.table && fit.table.fingerprint) || '', points: (fit.table && fit.table.points) || fit.points || 0 },
    report: { points: fit.points, iterations: fit.iterations, fit: fit.fit, findings: fit.findings || [] },
    plots: fit.plots || null,
    table: fit.table || null,
    options,
    cancelled: !!fit.cancelled,
    savedAt: new Date().toISOString(),
  });
}

/** The process file (as file.js writes it) of one entry, with base supply vdd. */
export function fileOfEntry(e, baseVdd) {
  const f = { name: e.name, title: '', base: e.base, vdd: e.vdd || baseVdd, n: {}, p: {}, n_bins: [], p_bins: [], source: {}, fit: {} };
  f[e.pol] = { ...e.params };
  f[`${e.pol}_bins`] = e.bins.map((b) => ({ l: b.l, params: { ...b.params } }));
  if (e.source) f.source[e.pol] = { file: e.source.file || '', fingerprint: e.source.fingerprint || '', points: e.source.points || 0 };
  if (e.report) f.fit[e.pol] = e.report;
  return f;
}
