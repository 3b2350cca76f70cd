// Saved designs: a list kept in the browser (localStorage, so it works
// offline and from a file opened from disk) that survives a reload. Each
// entry holds a name, the design's canonical fragment and the figures shown
// beside it (stage, gain, f3db, power). The list goes out as a text file
// with one fragment per line, the text `stagewright eval -` reads (a line
// "// name: …" before a fragment names it; eval skips comment lines), and
// comes back in from such a file: each bad line is named by its number and
// the good ones are kept.
import { h, clear, morph } from './dom.js';
import { formatSI } from './si.js';

export const STORAGE_KEY = 'stagewright.saved.v1';
export const MAX_SAVED = 500; // entries kept; an import beyond that is cut, and says so
const MAX_FILE = 4 << 20; // bytes of an imported file
const MAX_NAME = 80;
const BATCH = 50; // fragments per evaluateMany call on import

const STAGE_WORDS = { cs: 'common source', cg: 'common gate', sf: 'source follower' };

/** A name as it may be stored: one line, no control characters, at most MAX_NAME characters. */
export function cleanName(text) {
  // eslint-disable-next-line no-control-regex
  return String(text ?? '').replace(/[\u0000-\u001f\u007f]+/g, ' ').trim().slice(0, MAX_NAME);
}

/** The figures kept beside a saved design, from an evaluation result. */
export function figuresOf(r) {
  const num = (v) => (typeof v === 'number' && Number.isFinite(v) ? v : null);
  const stage = (/(?:^|&)stage=([a-z]+)/.exec(r.design || '') || [])[1] || '';
  return { stage, gain: num(r.midband && r.midband.gain), f3db: num(r.ac && r.ac.f3db), power: num(r.op && r.op.power) };
}

/** The export file's text: a header comment, then "// name: …" and the fragment of each entry. */
export function exportText(entries, date = new Date()) {
  const lines = [`// Stagewright saved designs, ${date.toISOString().slice(0, 10)}: one design per line, read by \`stagewright eval -\``];
  for (const e of entries) {
    lines.push(`// name: ${cleanName(e.name)}`);
    lines.push(e.fragment);
  }
  return lines.join('\n') + '\n';
}

/**
 * Reads an export file: [{line, name, fragment}] for the fragment lines and
 * [{line, message}] for lines that cannot be one (evaluation is the caller's).
 */
export function parseExport(text) {
  const items = [];
  const bad = [];
  let name = '';
  String(text).split(/\r?\n/).forEach((raw, i) => {
    const line = i + 1;
    const t = raw.trim();
    if (t === '') return;
    if (t.startsWith('//')) {
      const m = /^\/\/\s*name:\s*(.*)$/.exec(t);
      if (m) name = cleanName(m[1]);
      return;
    }
    const fragment = t.startsWith('#') ? t.slice(1) : t;
    if (fragment.length > 4096) bad.push({ line, message: `${fragment.length} characters; a design is at most 4096` });
    else items.push({ line, name, fragment });
    name = '';
  });
  return { items, bad };
}

function load(storage) {
  try {
    const list = JSON.parse(storage.getItem(STORAGE_KEY) || '[]');
    if (!Array.isArray(list)) return [];
    return list
      .filter((e) => e && typeof e.fragment === 'string' && e.fragment.length <= 4096)
      .slice(0, MAX_SAVED)
      .map((e) => ({
        id: String(e.id || ''), name: cleanName(e.name), fragment: e.fragment, stage: String(e.stage || ''),
        gain: typeof e.gain === 'number' ? e.gain : null, f3db: typeof e.f3db === 'number' ? e.f3db : null, power: typeof e.power === 'number' ? e.power : null,
      }));
  } catch {
    return [];
  }
}

/**
 * host: {box (element to fill), engine (call(method, …)), current() → {fragment, result},
 * open(fragment), download(blob, name), storage (localStorage by default)}.
 */
export function startSaved(host) {
  const storage = host.storage || globalThis.localStorage;
  let entries = [];
  let storageOK = true;
  try {
    entries = load(storage);
  } catch {
    storageOK = false;
  }
  let serial = entries.reduce((m, e) => Math.max(m, Number(e.id.replace(/\D/g, '')) || 0), 0);
  const newId = () => `d${++serial}`;
  entries.forEach((e) => {
    if (!e.id) e.id = newId();
  });

  const count = h('span', { id: 'saved-count' });
  const saveBtn = h('button', { type: 'button', id: 'saved-save', text: 'Save this design' });
  const exportBtn = h('button', { type: 'button', class: 'small', id: 'saved-export', text: 'Export list as text' });
  const importInput = h('input', { type: 'file', id: 'saved-import', accept: '.txt,text/plain', hidden: true, 'aria-label': 'file of saved designs to import' });
  const importLabel = h('button', { type: 'button', class: 'small', id: 'saved-import-button', text: 'Import a list…' });
  importLabel.addEventListener('click', () => importInput.click());
  const msg = h('p', { class: 'aid-note', id: 'saved-msg', 'aria-live': 'polite' });
  const list = h('div', { id: 'saved-list' });
  const details = h(
    'details',
    { class: 'saved', id: 'saved-panel' },
    h('summary', {}, h('strong', { text: 'Saved designs ' }), count),
    h('div', { class: 'saved-bar' }, saveBtn, exportBtn, importLabel, importInput),
    msg,
    list,
  );
  clear(host.box);
  host.box.appendChild(details);

  function persist() {
    try {
      storage.setItem(STORAGE_KEY, JSON.stringify(entries.map(({ id, name, fragment, stage, gain, f3db, power }) => ({ id, name, fragment, stage, gain, f3db, power }))));
      return true;
    } catch (err) {
      storageOK = false;
      say(`The list could not be kept in this browser (${err && err.name === 'QuotaExceededError' ? 'its storage is full' : 'storage is not available here'}); export it to keep it.`, 'bad');
      return false;
    }
  }

  function say(text, tone = '') {
    msg.textContent = text;
    msg.className = `aid-note ${tone === 'bad' ? 'aid-warn' : ''}`;
  }

  function render() {
    count.textContent = `(${entries.length})`;
    document.body.dataset.saved = String(entries.length);
    if (!entries.length) {
      morph(list, [h('p', { class: 'aid-note', text: storageOK ? 'Nothing saved yet. Save this design keeps it here, in this browser, across reloads.' : 'This browser keeps nothing here; export the list to keep it.' })]);
      return;
    }
    const rows = entries.map((e) => {
      const name = h('input', { type: 'text', value: e.name, 'aria-label': `name of saved design ${e.name}`, 'data-id': e.id, class: 'saved-name', maxlength: MAX_NAME });
      name.addEventListener('change', () => rename(e.id, name.value));
      const open = h('button', { type: 'button', class: 'small saved-open', 'data-id': e.id, text: 'Open' });
      open.addEventListener('click', () => host.open(e.fragment));
      const del = h('button', { type: 'button', class: 'small saved-delete', 'data-id': e.id, text: 'Delete' });
      del.addEventListener('click', () => remove(e.id));
      return h(
        'tr',
        { 'data-id': e.id },
        h('td', {}, name),
        h('td', { text: STAGE_WORDS[e.stage] || e.stage || '—' }),
        h('td', { class: 'num', text: e.gain == null ? '—' : formatSI(e.gain, 4, 'V/V') }),
        h('td', { class: 'num', text: e.f3db == null ? '—' : formatSI(e.f3db, 3, 'Hz') }),
        h('td', { class: 'num', text: e.power == null ? '—' : formatSI(e.power, 3, 'W') }),
        h('td', { class: 'saved-actions' }, open, del),
      );
    });
    // Rebuilt whole: the list changes only on a click, and a rebuilt row
    // carries its own listeners.
    clear(list);
    list.appendChild(
      h(
        'div',
        { class: 'table-wrap' },
        h(
          'table',
          { class: 'grid', id: 'saved-table' },
          h('thead', {}, h('tr', {}, ['name', 'stage', 'gain', 'f3db', 'power', ''].map((t) => h('th', { scope: 'col', text: t })))),
          h('tbody', {}, rows),
        ),
      ),
    );
  }

  function add(name, r) {
    if (entries.length >= MAX_SAVED) return false;
    entries.push({ id: newId(), name: cleanName(name) || `design ${serial}`, fragment: r.design, ...figuresOf(r) });
    return true;
  }

  function rename(id, name) {
    const e = entries.find((x) => x.id === id);
    if (!e) return;
    const clean = cleanName(name);
    if (!clean) {
      say('A saved design needs a name; the old one is kept.', 'bad');
      render();
      return;
    }
    e.name = clean;
    if (persist()) say(`Renamed to “${clean}”.`);
    render();
  }

  function remove(id) {
    const i = entries.findIndex((x) => x.id === id);
    if (i < 0) return;
    const [gone] = entries.splice(i, 1);
    if (persist()) say(`Deleted “${gone.name}”.`);
    render();
  }

  saveBtn.addEventListener('click', () => {
    const { result } = host.current();
    if (!result || !result.ok || !result.design) {
      say('There is no result to save: change the design until it has an operating point.', 'bad');
      return;
    }
    const figures = figuresOf(result);
    const gain = figures.gain == null ? '' : ` ${formatSI(figures.gain, 3, 'V/V')}`;
    if (!add(`${STAGE_WORDS[figures.stage] || 'design'}${gain}`, result)) {
      say(`The list holds at most ${MAX_SAVED} designs; delete some first.`, 'bad');
      return;
    }
    if (persist()) say(`Saved as “${entries[entries.length - 1].name}”; rename it in the list.`);
    details.open = true;
    render();
  });

  exportBtn.addEventListener('click', () => {
    if (!entries.length) {
      say('Nothing to export yet.', 'bad');
      return;
    }
    host.download(new Blob([exportText(entries)], { type: 'text/plain' }), 'stagewright-designs.txt');
    say(`Exported ${entries.length} design${entries.length > 1 ? 's' : ''}, one per line (stagewright eval - reads the file).`);
  });

  importInput.addEventListener('change', async () => {
    const file = importInput.files && importInput.files[0];
    importInput.value = '';
    if (!file) return;
    document.body.dataset.savedImport = 'running';
    try {
      if (file.size > MAX_FILE) {
        say(`${file.name} is ${file.size} bytes; at most ${MAX_FILE} are read.`, 'bad');
        return;
      }
      const { items, bad } = parseExport(await file.text());
      let kept = 0;
      let full = 0;
      for (let i = 0; i < items.length; i += BATCH) {
        const chunk = items.slice(i, i + BATCH);
        const { response } = await host.engine.call('evaluateMany', chunk.map((it) => it.fragment));
        const answers = (response && response.result) || [];
        chunk.forEach((it, j) => {
          const a = answers[j] || {};
          const r = a.result;
          if (!r) bad.push({ line: it.line, message: (a.error && a.error.message) || 'no answer' });
          else if (r.problems && r.problems.length) bad.push({ line: it.line, message: r.problems.map((p) => `${p.key}${p.value !== '' ? '=' + p.value : ''}: ${p.message}`).join('; ') });
          else if (!r.ok) bad.push({ line: it.line, message: (r.error && r.error.message) || 'no operating point' });
          else if (add(it.name || `line ${it.line}`, r)) kept++;
          else full++;
        });
      }
      if (kept) persist();
      bad.sort((a, b) => a.line - b.line);
      const parts = [`${file.name}: ${kept} design${kept === 1 ? '' : 's'} added`];
      if (full) parts.push(`${full} left out (the list holds at most ${MAX_SAVED})`);
      if (bad.length) parts.push(`${bad.length} bad line${bad.length > 1 ? 's' : ''} skipped — ${bad.slice(0, 20).map((b) => `line ${b.line}: ${b.message}`).join('; ')}${bad.length > 20 ? '; …' : ''}`);
      say(parts.join('; ') + '.', bad.length ? 'bad' : '');
      details.open = true;
      render();
    } catch (err) {
      say(`${file.name} could not be read: ${err.message}`, 'bad');
    } finally {
      document.body.dataset.savedImport = 'done';
    }
  });

  window.addEventListener('storage', (e) => {
    // another tab of the same page changed the list
    if (e.key !== STORAGE_KEY) return;
    entries = load(storage);
    entries.forEach((x) => {
      if (!x.id) x.id = newId();
    });
    render();
  });

  render();
  return { entries: () => entries.slice() };
}
