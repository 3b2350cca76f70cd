// "Your process": a characterization file of the user's own transistor
// (chosen or dropped, read in the page, never sent anywhere) is fitted in
// the aids' worker (fitStart, a job with progress and cancel); the panel
// shows the table's summary, the fit errors per region, the findings and the
// data against the model, and designs with the result: the design's
// fragment gets proc=BASE and the fit's n.* or p.* keys, so a link carries
// the process. Fits are kept in a list in the browser (store.js) and go out
// and come back in as process files (file.js).
import '../aids.css';
import './process.css';
import { h, clear, note, numberField, table, num, callAid } from '../aids/common.js';
import { Job } from '../aids/job.js';
import { splitFragment, joinFragment } from '../fragment.js';
import { fitPlots } from './plots.js';
import { readProcessFile, writeProcessFile, processFragment, sideFragment, ProcessFileError } from './file.js';
import { loadProcesses, saveProcesses, entryFromFit, fileOfEntry, cleanProcessName, MAX_PROCESSES, MAX_NAME, STORAGE_KEY } from './store.js';

const MAX_CSV = 50 << 20; // bytes, as core/chardata
const MAX_PROCESS_FILE = 1 << 20;
const REGIONS = [
  ['weak', 'weak inversion (IC < 0.1)'],
  ['moderate', 'moderate inversion'],
  ['strong', 'strong inversion (IC > 10)'],
  ['triode', 'triode (VDS < VDsat)'],
  ['saturation', 'saturation'],
];
const KEEP_ON_NEW_BASE = ['stage', 'load', 'bias'];

const pct = (v) => (typeof v === 'number' && Number.isFinite(v) ? `${v.toFixed(v < 10 ? 2 : 1)} %` : '—');
const sentence = (s) => (/[.!?]$/.test(s) ? s : `${s}.`);
const list = (vs, unit) => vs.map((v) => num(v, 3, unit)).join(', ');

/**
 * host: {engine (the aids' engine: call(method, …args)), canonical() (the
 * present design's fragment), go(fragment) (load a design), download(blob, name),
 * storage (localStorage by default)}.
 */
export function startProcess(host) {
  const storage = host.storage || globalThis.localStorage;
  const schemas = new Map(); // base → {defaults: Map key → value, vdd, bases}
  let entries = loadProcesses(storage);
  let serial = entries.reduce((m, e) => Math.max(m, Number(e.id.replace(/\D/g, '')) || 0), 0);
  entries.forEach((e) => {
    if (!e.id) e.id = `u${++serial}`;
  });
  let shown = null; // the entry whose report the panel shows
  let pending = null; // {name, text}: the file chosen last

  // --- the frame
  const title = h('h2', { id: 'proc-title', text: 'Your process' });
  const section = h('section', { class: 'panel aid proc', id: 'proc', 'aria-labelledby': 'proc-title' }, h('div', { class: 'plot-head' }, title));
  const body = h('div', { class: 'aid-body', id: 'proc-body' });
  section.appendChild(body);

  // --- the data file and the fit's settings
  const fileInput = h('input', { type: 'file', id: 'proc-file', accept: '.csv,.tsv,.txt,text/csv,text/plain' });
  const fileField = h('label', { class: 'aid-field proc-file', for: 'proc-file' }, h('span', { class: 'aid-label', text: 'characterization file (CSV)' }), fileInput);
  const fileNote = h('p', { class: 'aid-note', id: 'proc-file-note', 'aria-live': 'polite', text: 'Choose a file or drop it on this panel. Columns vgs, vds, id and optionally vbs, w, l, temp, gm, gds, cgg; comma, semicolon or tab separated; # starts a comment line. The file is read in this page and never sent anywhere.' });
  const select = (id, label, options, title_) => {
    const s = h('select', { id, title: title_ }, options.map(([v, t]) => h('option', { value: v, text: t })));
    return { s, wrap: h('label', { class: 'aid-field', for: id }, h('span', { class: 'aid-label', text: label }), s) };
  };
  const pol = select('proc-pol', 'device type', [['n', 'n-type'], ['p', 'p-type']], 'The type of the measured transistor, checked against the signs in the file');
  const base = select('proc-base', 'base process', [['d180', 'd180'], ['d65', 'd65']], 'The demo process whose oxide, capacitances, noise, spread and geometry limits the fitted device keeps');
  const w = numberField('proc-w', 'W', 'm', () => {}, { size: 6, title: 'Channel width, for a file without a w column (e.g. 10u)' });
  const l = numberField('proc-l', 'L', 'm', () => {}, { size: 6, title: 'Channel length, for a file without an l column (e.g. 180n)' });
  const temp = numberField('proc-temp', 'temperature', '°C', () => {}, { size: 4, title: 'Temperature of a file without a temp column; 27 °C when empty' });
  for (const f of [w, l, temp]) f.input.placeholder = 'from file';
  const fitBtn = h('button', { type: 'button', id: 'proc-fit', text: 'Fit' });
  const cancelBtn = h('button', { type: 'button', id: 'proc-cancel', text: 'Cancel', disabled: true });
  const bar = h('progress', { id: 'proc-progress', max: 1, value: 0, 'aria-label': 'fit progress' });
  const progressText = h('span', { class: 'aid-progress-text', id: 'proc-progress-text', 'aria-live': 'polite' });
  const settings = h('div', { class: 'aid-controls' }, pol.wrap, base.wrap, w.wrap, l.wrap, temp.wrap);
  const run = h('div', { class: 'aid-controls' }, fitBtn, cancelBtn, bar, progressText);
  const msg = note();
  msg.id = 'proc-msg';
  body.append(h('div', { class: 'aid-controls' }, fileField), fileNote, settings, run, msg);

  // --- the report of the shown process
  const report = h('div', { class: 'proc-report', id: 'proc-report', hidden: true });
  const heading = h('h3', { class: 'proc-name', id: 'proc-shown' });
  const summary = h('p', { class: 'aid-note proc-summary', id: 'proc-summary' });
  const errors = h('div', { id: 'proc-errors' });
  const overall = h('p', { class: 'aid-yield', id: 'proc-overall' });
  const findings = h('ul', { class: 'proc-findings', id: 'proc-findings' });
  const paramsBox = h('div', { id: 'proc-params' });
  const plotsBox = h('div', { id: 'proc-plots' });
  const noPlots = h('p', { class: 'aid-note', id: 'proc-no-plots', hidden: true, text: 'No plots: this process came from a process file, which carries the fit report but not the data. Fit the data file to see them.' });
  const asN = h('button', { type: 'button', id: 'proc-design-n', text: 'Design with it as n-type' });
  const asP = h('button', { type: 'button', id: 'proc-design-p', text: 'Design with it as p-type' });
  const saveBtn = h('button', { type: 'button', id: 'proc-save', text: 'Save process file' });
  const designNote = h('p', { class: 'aid-note', id: 'proc-design-note' });
  const designed = note();
  designed.id = 'proc-designed';
  report.append(
    heading, summary, errors, overall,
    h('h4', { text: 'What the differences mean for a design' }), findings,
    paramsBox, plotsBox, noPlots,
    h('div', { class: 'aid-controls' }, asN, asP, saveBtn), designNote, designed,
  );
  body.appendChild(report);
  const plots = fitPlots(plotsBox);

  // --- the list
  const count = h('span', { id: 'proc-count' });
  const loadInput = h('input', { type: 'file', id: 'proc-load', accept: '.json,application/json', hidden: true, 'aria-label': 'process file to load' });
  const loadBtn = h('button', { type: 'button', class: 'small', id: 'proc-load-button', text: 'Load process file…' });
  loadBtn.addEventListener('click', () => loadInput.click());
  const listMsg = h('p', { class: 'aid-note', id: 'proc-list-msg', 'aria-live': 'polite' });
  const listBox = h('div', { id: 'proc-list' });
  body.append(h('div', { class: 'plot-head proc-list-head' }, h('h3', {}, 'Your processes ', count), loadBtn, loadInput), listMsg, listBox);

  const say = (box, text, bad = false) => {
    box.textContent = text;
    box.classList.toggle('aid-warn', bad);
  };
  const setState = (s) => {
    document.body.dataset.fitState = s;
  };

  // --- the base processes' parameters (the schema gives each override key the base's value)
  async function baseInfo(b) {
    if (schemas.has(b)) return schemas.get(b);
    const { result } = await callAid(host.engine, 'schema', b);
    const defaults = new Map();
    let vdd = 0;
    let bases = ['d180', 'd65'];
    const params = [];
    const words = new Map(); // override key → its label and unit
    for (const k of result) {
      if (/^[np]\./.test(k.key)) {
        defaults.set(k.key, k.default);
        words.set(k.key, k.unit ? `${k.label}, ${k.unit}` : k.label);
      }
      if (k.key.startsWith('n.')) params.push(k.key.slice(2));
      if (k.key === 'vdd') vdd = k.default;
      if (k.key === 'proc' && Array.isArray(k.choices) && k.choices.length) bases = k.choices;
    }
    const info = { defaults, vdd, bases, params, words };
    schemas.set(b, info);
    return info;
  }

  // --- the data file
  async function takeFile(file) {
    if (!file) return;
    if (file.size > MAX_CSV) {
      say(fileNote, `${file.name} is ${num(file.size, 3, 'B')}; a data file is at most 50 MB. Nothing was read${shown ? '; the fit shown is kept' : ''}.`, true);
      return;
    }
    const text = await file.text();
    pending = { name: file.name, text };
    const lines = text.split('\n').length - (text.endsWith('\n') ? 1 : 0);
    say(fileNote, `${file.name}: ${num(file.size, 3, 'B')}, ${lines} lines, read in this page. Set the device type and the base, then press Fit.`);
    document.body.dataset.procFile = file.name;
  }
  fileInput.addEventListener('change', () => takeFile(fileInput.files && fileInput.files[0]));
  section.addEventListener('dragover', (e) => {
    if (!e.dataTransfer || ![...e.dataTransfer.types].includes('Files')) return;
    e.preventDefault();
    section.classList.add('proc-drop');
  });
  section.addEventListener('dragleave', (e) => {
    if (!section.contains(e.relatedTarget)) section.classList.remove('proc-drop');
  });
  section.addEventListener('drop', (e) => {
    section.classList.remove('proc-drop');
    const file = e.dataTransfer && e.dataTransfer.files && e.dataTransfer.files[0];
    if (!file) return;
    e.preventDefault();
    takeFile(file);
  });

  // --- the fit
  const job = new Job(host.engine, 'fitStart');
  const FIELD_NAMES = { w: 'W', l: 'L', temp: 'temperature', pol: 'device type', base: 'base process' };
  function fitOptions() {
    const parts = [`pol=${pol.s.value}`, `base=${base.s.value}`];
    for (const [k, f] of [['w', w], ['l', l], ['temp', temp]]) {
      const v = f.input.value.trim();
      if (/[&=#\s]/.test(v)) throw Object.assign(new Error(`${FIELD_NAMES[k]}: "${v}" is not a number`), { key: k });
      parts.push(`${k}=${v}`);
    }
    return parts.join('&');
  }
  fitBtn.addEventListener('click', async () => {
    if (job.running) return;
    if (!pending) {
      say(msg, 'Choose a characterization file first (or drop one on this panel).', true);
      return;
    }
    const file = pending;
    let options;
    try {
      options = fitOptions();
    } catch (err) {
      say(msg, err.message, true);
      return;
    }
    fitBtn.disabled = true;
    cancelBtn.disabled = false;
    bar.removeAttribute('value'); // the number of iterations is not known in advance
    progressText.textContent = 'reading the file…';
    say(msg, '');
    setState('running');
    try {
      const { state, ms } = await job.run([file.text, options], (done) => {
        progressText.textContent = `iteration ${done}`;
      });
      const fit = state.result;
      const entry = entryFromFit(fit, file.name, options);
      entry.id = `u${++serial}`;
      // A fit of the same file with the same settings replaces the earlier
      // one; a cancelled fit replaces only a cancelled one.
      if (fit.cancelled) entry.name = cleanProcessName(`${entry.name} (cancelled)`);
      const same = entries.findIndex((e) => e.options === options && e.cancelled === entry.cancelled && e.source && entry.source && e.source.fingerprint === entry.source.fingerprint);
      if (same >= 0) {
        entry.name = entries[same].name;
        entries[same] = entry;
      } else entries.unshift(entry);
      if (entries.length > MAX_PROCESSES) entries.length = MAX_PROCESSES;
      persist();
      bar.value = 1;
      progressText.textContent = `${fit.iterations} iterations in ${(ms / 1000).toFixed(2)} s${fit.cancelled ? ' (cancelled: the best parameters so far)' : ''}`;
      show(entry);
      renderList();
      document.body.dataset.fitMs = String(Math.round(ms));
      setState(fit.cancelled ? 'cancelled' : 'done');
    } catch (err) {
      bar.value = 0;
      progressText.textContent = '';
      const field = FIELD_NAMES[err.key];
      say(msg, `${field ? '' : `${file.name}: `}${sentence(err.message)}${shown ? ` The fit shown (${shown.name}) is kept.` : ''}`, true);
      setState('failed');
    } finally {
      fitBtn.disabled = false;
      cancelBtn.disabled = true;
    }
  });
  cancelBtn.addEventListener('click', () => job.cancel());

  // --- the report
  function show(e) {
    shown = e;
    report.hidden = false;
    heading.textContent = `${e.name}: ${e.pol}-type on ${e.base}`;
    const t = e.table;
    const r = e.report || {};
    const abs = e.pol === 'p' ? (s) => `|${s}|` : (s) => s;
    if (t) {
      const cols = [t.has_gm && 'gm', t.has_gds && 'gds', t.has_cgg && 'cgg'].filter(Boolean);
      summary.textContent = [
        `${t.points} points read${r.points != null && r.points !== t.points ? ` (${r.points} above the current floor fitted)` : ''}`,
        `${t.lengths.length === 1 ? 'length' : `${t.lengths.length} lengths`} ${list(t.lengths, 'm')}`,
        `${t.widths.length === 1 ? 'width' : 'widths'} ${list(t.widths, 'm')}`,
        `${abs('VGS')} ${num(t.vgs[0], 3, 'V')} … ${num(t.vgs[1], 3, 'V')}`,
        `${abs('VDS')} ${num(t.vds[0], 3, 'V')} … ${num(t.vds[1], 3, 'V')}`,
        t.vbs[0] === t.vbs[1] ? `VBS ${num(t.vbs[0], 3, 'V')}` : `${abs('VBS')} ${num(t.vbs[0], 3, 'V')} … ${num(t.vbs[1], 3, 'V')}`,
        `${t.temps.map((x) => `${Number(x.toPrecision(4))} °C`).join(', ')}`,
        cols.length ? `columns ${cols.join(', ')} given` : 'gm and gds taken by differences (no gm, gds columns)',
      ].join('; ') + '.';
    } else {
      const s = e.source || {};
      summary.textContent = `From a process file${s.file ? `, fitted to ${s.file}` : ''}${s.points ? ` (${s.points} points)` : ''}.`;
    }
    const f = r.fit || {};
    const regions = f.regions || {};
    clear(errors);
    if (r.fit) {
      errors.appendChild(table('Drain current error of the fitted model against the data', ['region', 'points', 'ID rms error', 'ID worst error'], [
        ['all points', String(r.points ?? '—'), pct(f.id_rms_pct), pct(f.id_max_pct)],
        ...REGIONS.map(([k, label]) => {
          const g = regions[k] || {};
          return [label, String(g.points ?? 0), pct(g.id_rms_pct), pct(g.id_max_pct)];
        }),
      ], { id: 'proc-error-table' }));
      overall.textContent = `gm/ID rms error in saturation ${pct(f.gm_id_rms_pct)}; gds in saturation ${pct(f.gds_rms_pct)}. ${r.iterations ?? '—'} iterations${e.cancelled ? ', cancelled before the end: these are the best parameters found so far' : ''}.`;
    } else overall.textContent = 'This process file carries no fit report.';
    clear(findings);
    const fs = r.findings || [];
    for (const s of fs) findings.appendChild(h('li', { text: String(s) }));
    if (!fs.length) findings.appendChild(h('li', { text: r.fit ? 'The model follows the data everywhere within the report\'s thresholds.' : 'No findings.' }));
    showParams(e);
    plots.update(e.plots, e.pol);
    plotsBox.hidden = !e.plots;
    noPlots.hidden = !!e.plots;
    designNote.textContent = `The button sets the design's amplifying transistor M1 to that type; the fitted ${e.pol}-type device replaces the base's ${e.pol}-type one, and the other type keeps ${e.base}'s.`;
    say(designed, '');
    document.body.dataset.procShown = e.id;
  }

  async function showParams(e) {
    clear(paramsBox);
    let info;
    try {
      info = await baseInfo(e.base);
    } catch {
      return;
    }
    if (shown !== e) return;
    const rows = Object.keys(e.params).sort()
      .filter((k) => e.params[k] !== info.defaults.get(`${e.pol}.${k}`))
      .map((k) => [h('span', {}, h('code', { text: k }), info.words.has(`${e.pol}.${k}`) ? ` ${info.words.get(`${e.pol}.${k}`)}` : ''), num(e.params[k], 4), num(info.defaults.get(`${e.pol}.${k}`), 4)]);
    if (!rows.length) return;
    const binNote = e.bins.length ? `Per-length sets at L = ${list(e.bins.map((b) => b.l), 'm')} (the model interpolates in 1/L between them).` : '';
    paramsBox.append(table(`Fitted parameters (SI units; the link's ${e.pol}.* keys) against ${e.base}`, ['parameter', 'fitted', e.base], rows, { id: 'proc-param-table' }), binNote ? h('p', { class: 'aid-note', text: binNote }) : '');
  }

  // --- designing with a process
  async function designWith(e, m1) {
    let info;
    try {
      info = await baseInfo(e.base);
    } catch (err) {
      say(designed, `Cannot design on ${e.base}: ${err.message}`, true);
      return;
    }
    const now = splitFragment(host.canonical());
    const proc = (now.find(([k]) => k === 'proc') || [])[1] || 'd180';
    const kept = now.filter(([k]) => {
      if (k === 'v' || k === 'proc' || k === 'pol') return false;
      if (proc !== e.base) return KEEP_ON_NEW_BASE.includes(k); // the other values were the old base's
      if (k === 'vdd' && e.vdd) return false;
      return !k.startsWith(`${e.pol}.`);
    });
    const pairs = [['v', '2'], ['proc', e.base]];
    if (e.vdd && e.vdd !== info.vdd) pairs.push(['vdd', String(e.vdd)]);
    pairs.push(...kept.filter(([k]) => !/^[np]\./.test(k)), ['pol', m1], ...kept.filter(([k]) => /^[np]\./.test(k)), ...splitFragment(e.fragment));
    const fragment = joinFragment(pairs);
    say(designed, `The design is now on ${e.name}: ${m1}-type M1 on ${e.base} with the fitted ${e.pol}-type parameters (${splitFragment(e.fragment).length} keys in the link).`);
    host.go(fragment);
  }
  asN.addEventListener('click', () => shown && designWith(shown, 'n'));
  asP.addEventListener('click', () => shown && designWith(shown, 'p'));

  // --- process files
  saveBtn.addEventListener('click', async () => {
    if (!shown) return;
    const e = shown;
    let info;
    try {
      info = await baseInfo(e.base);
    } catch (err) {
      say(designed, `No process file: ${err.message}`, true);
      return;
    }
    const text = writeProcessFile(fileOfEntry(e, info.vdd));
    const name = `${e.name.replace(/[^A-Za-z0-9._-]+/g, '_').replace(/^_+|_+$/g, '') || 'process'}.stagewright-process.json`;
    host.download(new Blob([text], { type: 'application/json' }), name);
    say(designed, `Saved as ${name}: the page (Load process file) and the command line (stagewright … -process FILE) read it.`);
  });

  loadInput.addEventListener('change', async () => {
    const file = loadInput.files && loadInput.files[0];
    loadInput.value = '';
    if (!file) return;
    document.body.dataset.procLoad = 'running';
    try {
      if (file.size > MAX_PROCESS_FILE) throw new ProcessFileError(`the file is ${file.size} bytes; a process file is at most ${MAX_PROCESS_FILE}`);
      const text = await file.text();
      const first = await baseInfo('d180');
      const pf = readProcessFile(text, { bases: first.bases, params: first.params });
      const info = await baseInfo(pf.base);
      // The ranges are the engine's to judge: the fragment on a default
      // design must come back without a problem (each names its key).
      const fragment = processFragment(pf, info.defaults);
      const { response } = await host.engine.call('evaluate', fragment);
      const r = response && response.result;
      const problems = (r && r.problems) || [];
      if (!r) throw new Error((response && response.error && response.error.message) || 'the engine gave no answer');
      if (problems.length) throw new Error(`the process's parameters have ${problems.length > 1 ? 'problems' : 'a problem'}: ${problems.map((p) => `${p.key}${p.value !== '' ? `=${p.value}` : ''}: ${p.message}`).join('; ')}`);
      const added = [];
      for (const p of ['n', 'p']) {
        const has = Object.keys(pf[p]).length || pf[`${p}_bins`].length;
        if (!has) continue;
        const src = pf.source[p];
        const entry = {
          id: `u${++serial}`, name: cleanProcessName(pf.name) || 'process', pol: p, base: pf.base, vdd: pf.vdd || 0,
          fragment: sideFragment(pf, p, info.defaults), params: { ...pf[p] }, bins: pf[`${p}_bins`],
          source: src ? { file: String(src.file || ''), fingerprint: String(src.fingerprint || ''), points: Number(src.points) || 0 } : null,
          report: pf.fit[p] || null, plots: null, table: null, options: '', cancelled: false, savedAt: new Date().toISOString(),
        };
        added.push(entry);
      }
      if (!added.length) throw new ProcessFileError('the file sets no parameter of either type (n and p are empty)');
      entries.unshift(...added);
      if (entries.length > MAX_PROCESSES) entries.length = MAX_PROCESSES;
      persist();
      renderList();
      show(added[0]);
      say(listMsg, `${file.name}: process ${pf.name} on ${pf.base} loaded (${added.map((e) => `${e.pol}-type`).join(' and ')}).`);
      document.body.dataset.procLoad = 'done';
    } catch (err) {
      say(listMsg, `${file.name} was not loaded: ${sentence(err instanceof ProcessFileError ? `process file: ${err.message}` : err.message)}${shown ? ` The process shown (${shown.name}) is kept.` : ''}`, true);
      document.body.dataset.procLoad = 'failed';
    }
  });

  // --- the list
  function persist() {
    try {
      saveProcesses(storage, entries);
      return true;
    } catch (err) {
      say(listMsg, `The list could not be kept in this browser (${err && err.name === 'QuotaExceededError' ? 'its storage is full: delete some processes' : 'storage is not available here'}); save process files to keep them.`, true);
      return false;
    }
  }

  function renderList() {
    count.textContent = `(${entries.length})`;
    document.body.dataset.processes = String(entries.length);
    clear(listBox);
    if (!entries.length) {
      listBox.appendChild(h('p', { class: 'aid-note', text: 'None yet. Each fit is kept here, in this browser, across reloads; a process file can be loaded too.' }));
      return;
    }
    const rows = entries.map((e) => {
      const name = h('input', { type: 'text', value: e.name, class: 'saved-name', maxlength: MAX_NAME, 'aria-label': `name of process ${e.name}`, 'data-id': e.id });
      name.addEventListener('change', () => {
        const clean = cleanProcessName(name.value);
        if (!clean) {
          say(listMsg, 'A process needs a name; the old one is kept.', true);
          name.value = e.name;
          return;
        }
        e.name = clean;
        name.value = clean;
        if (persist()) say(listMsg, `Renamed to “${clean}”.`);
        if (shown === e) heading.textContent = `${e.name}: ${e.pol}-type on ${e.base}`;
      });
      const btn = (cls, text, fn) => {
        const b = h('button', { type: 'button', class: `small ${cls}`, 'data-id': e.id, text });
        b.addEventListener('click', fn);
        return b;
      };
      const f = (e.report && e.report.fit) || {};
      const facts = `${e.pol}-type on ${e.base}; ID rms error ${pct(f.id_rms_pct)}, gm/ID ${pct(f.gm_id_rms_pct)}${e.source && e.source.file ? `; from ${e.source.file}` : ''}`;
      return h('li', { class: 'proc-item', 'data-id': e.id },
        name,
        h('span', { class: 'proc-facts', text: facts }),
        h('span', { class: 'saved-actions' },
          btn('proc-show', 'Show', () => show(e)),
          btn('proc-use', 'Use', () => {
            show(e);
            designWith(e, e.pol);
          }),
          btn('proc-delete', 'Delete', () => {
            entries = entries.filter((x) => x !== e);
            if (persist()) say(listMsg, `Deleted “${e.name}”.`);
            if (shown === e) {
              shown = null;
              report.hidden = true;
            }
            renderList();
          })));
    });
    listBox.appendChild(h('ul', { class: 'proc-items', id: 'proc-items' }, rows));
  }

  window.addEventListener('storage', (e) => {
    if (e.key !== STORAGE_KEY) return; // another tab changed the list
    entries = loadProcesses(storage);
    renderList();
  });

  renderList();
  return { section, entries: () => entries.slice() };
}
