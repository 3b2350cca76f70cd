// The Stagewright page: wires the controls, the engine and the results.
import './style.css';
import { Engine, PAGE_VERSION } from './engine.js';
import { Controls, defaultText, relevant } from './controls.js';
import { drawSchematic, annotateSchematic } from './schematic.js';
import { frequencyPlot, noisePlot, impedancePlot } from './plots.js';
import { drawSPlane } from './splane.js';
import { renderOP, renderSmallSignal, renderMidband, renderEstimates, renderRoots, renderWarnings } from './results.js';
import { download, sweepCSV } from './export.js';
import { fragmentMap, joinFragment, splitFragment } from './fragment.js';
import { parseSI, exactSI, formatSI } from './si.js';
import { h, clear } from './dom.js';
import { startAids } from './aids/index.js';
import { startSaved } from './saved.js';
import { startProcess } from './process/index.js';

const $ = (id) => document.getElementById(id);
const STRUCTURAL = ['stage', 'pol', 'load', 'bias', 'proc'];

// The design aids get an engine of their own in a second worker (started
// from the module the first one compiled, once the first result is drawn),
// so that a slider never waits behind a transfer curve, a chart or a Monte
// Carlo step. Until it runs, or if it cannot start, they use the first.
const aidEngine = {
  ready: null,
  call(method, ...args) {
    return this.pin().then((e) => e.call(method, ...args));
  },
  /** The engine calls go to now; a job keeps it for all its steps (its run lives in that engine). */
  pin() {
    return this.ready || Promise.resolve(state.engine);
  },
  start(module) {
    if (this.ready || !module) return;
    this.ready = (async () => {
      try {
        const e = new Engine();
        await e.startFrom(module);
        document.body.dataset.aidEngine = 'own';
        return e;
      } catch {
        document.body.dataset.aidEngine = 'shared';
        return state.engine;
      }
    })();
  },
};

const state = {
  engine: new Engine(),
  controls: null,
  schemaProc: null,
  schema: [],
  values: new Map(), // key → fragment text of the design shown
  canonical: '', // canonical fragment of the last evaluated design
  requested: null, // the fragment of the newest evaluation asked for
  renderGeneration: 0, // counts renders, so a late second half of an old one is skipped
  result: null,
  response: null,
  plots: {},
  firstPlotAt: null,
  evalMs: null,
};

function status(text, tone = '') {
  const s = $('status');
  s.textContent = text;
  s.className = `status ${tone}`;
}

function fatal(message) {
  status(`The engine could not start: ${message}`, 'bad');
  document.body.classList.add('engine-failed');
  document.body.dataset.state = 'failed';
}

/** The fragment as the page currently holds it (without '#'). */
function currentHash() {
  return location.hash.startsWith('#') ? location.hash.slice(1) : location.hash;
}

async function loadSchema(proc) {
  if (state.schemaProc === proc && state.schema.length) return;
  const { response } = await state.engine.call('schema', proc);
  if (response.error) throw new Error(`schema(${proc}): ${response.error.message}`);
  state.schema = response.result;
  state.schemaProc = proc;
  state.controls.build(state.schema);
}

function schemaDefault(key, stage = state.values.get('stage')) {
  const info = state.schema.find((k) => k.key === key);
  return info ? defaultText(info, stage) : undefined;
}

function sameValue(a, b) {
  if (a === b) return true;
  const x = parseSI(a).value;
  const y = parseSI(b).value;
  return x !== undefined && x === y;
}

// DC levels measured from ground: a polarity change mirrors them between
// the rails (the p-type circuit is the n-type one upside down).
const LEVELS = ['vin', 'vg', 'vout'];

/**
 * Builds the fragment after the user changed one key. A change of stage,
 * polarity, load, bias mode or process keeps only the values that differ
 * from their defaults and that the new topology uses, so that it gets its
 * own defaults for the rest. A stage change also drops a value whose
 * meaning depends on the stage (a key with per-stage defaults, such as vin:
 * the gate of a cs stage, the source level of a cg stage); a polarity
 * change mirrors the DC levels (v → vdd − v).
 */
function editedFragment(key, text, structural) {
  const pairs = [];
  const now = (k) => (k === key ? text : state.values.get(k) ?? schemaDefault(k));
  const stage = now('stage');
  const polChange = key === 'pol' && text !== (state.values.get('pol') ?? schemaDefault('pol'));
  const vdd = parseSI(now('vdd') || '').value;
  for (const [k, v] of state.values) {
    if (k === key) continue;
    let value = v;
    if (structural && !STRUCTURAL.includes(k) && k !== 'v') {
      const def = schemaDefault(k);
      if (def === undefined || sameValue(def, v)) continue;
      const info = state.schema.find((i) => i.key === k);
      if (info && !relevant(info, stage, now('load'), now('bias'))) continue;
      if (key === 'stage' && info && info.stage_defaults && Object.keys(info.stage_defaults).length) continue;
      if (polChange && LEVELS.includes(k) && vdd !== undefined) {
        const x = parseSI(v).value;
        if (x !== undefined) value = exactSI(Math.min(vdd, Math.max(0, vdd - x)));
      }
    }
    pairs.push([k, value]);
  }
  pairs.push([key, text]);
  return joinFragment(pairs);
}

// Writing the address costs several milliseconds in Chromium (a same-document
// navigation), more than the rest of a slider step, so slider moves write the
// link once they pause for LINK_SETTLE_MS; a typed value, a picker or an aid
// writes it at once. A pending write is flushed when the page is hidden and
// dropped when the user edits the address (hashchange).
const LINK_SETTLE_MS = 200;
const link = { timer: null, want: null };

function writeLink(fragment, now) {
  link.want = fragment;
  clearTimeout(link.timer);
  link.timer = null;
  if (now) flushLink();
  else link.timer = setTimeout(flushLink, LINK_SETTLE_MS);
}

function flushLink() {
  clearTimeout(link.timer);
  link.timer = null;
  if (link.want !== null && currentHash() !== link.want) history.replaceState(null, '', `#${link.want}`);
  link.want = null;
  document.body.dataset.linkPending = 'false';
}

function dropLink() {
  clearTimeout(link.timer);
  link.timer = null;
  link.want = null;
  document.body.dataset.linkPending = 'false';
}

function onEdit(key, text, { final, structural, slider }) {
  const fragment = editedFragment(key, text, structural);
  state.values = fragmentMap(fragment);
  if (slider) document.body.dataset.linkPending = 'true';
  writeLink(fragment, final && !slider);
  // A slider's change event repeats its last input event's value: that
  // design is already computed (or on its way), so only the link is written.
  if (fragment === state.requested) return;
  evaluate(fragment, { fromLink: false });
}

// The bridge refuses longer requests whole (the codec itself reads at most
// 4096 bytes and says so); the page says so too and shows the defaults.
const MAX_LINK = 65536;

async function evaluate(fragment, { fromLink, schemaReady = null }) {
  state.requested = fragment;
  let pageProblems = [];
  let sent = fragment;
  if (fragment.length > MAX_LINK) {
    pageProblems = [{ key: '', value: '', message: `the link is ${fragment.length} characters long; at most ${MAX_LINK} are read, so every setting keeps its default` }];
    sent = '';
  }
  const proc = fragmentMap(sent).get('proc');
  // The evaluation is sent at once; the worker computes it while this
  // thread waits for (and builds controls from) a schema that is still on
  // its way. A bad process name is reported by the evaluation itself.
  let schema = schemaReady;
  if (!schema && proc && proc !== state.schemaProc && /^[a-z0-9]{1,16}$/.test(proc)) schema = loadSchema(proc).catch(() => {});
  let reply;
  try {
    const answer = state.engine.evaluate(sent);
    if (schema) await schema;
    reply = await answer;
    if (document.body.dataset.state === 'failed') return; // the schema could not be read: the page said why
  } catch (err) {
    fatal(err.message);
    return;
  }
  if (reply.superseded) return;
  render(reply.response, fragment, fromLink, reply.ms, pageProblems);
}

function render(response, fragment, fromLink, ms, pageProblems = []) {
  state.response = response;
  // counted first, so tests can wait for any answer, with or without a result
  document.body.dataset.evaluations = String(Number(document.body.dataset.evaluations || 0) + 1);
  const r = response.result;
  const err = response.error;
  if (!r) {
    status(`No result: ${err ? err.message : 'the engine gave no answer'}`, 'bad');
    if (fragment === state.requested) state.values = new Map(); // see `latest` below
    const d = (k) => schemaDefault(k, undefined);
    state.controls.show(state.values, { stage: d('stage'), load: d('load'), bias: d('bias') });
    state.renderGeneration++;
    showNotice(fragment, pageProblems, err);
    document.body.dataset.state = 'no-result';
    return;
  }
  state.result = r;
  state.canonical = r.design || '';
  state.evalMs = ms;
  // The plots first, while the layout is still clean (a new plot reads the
  // width of its box, which after other changes would force a layout).
  document.body.classList.toggle('no-result', !r.ok);
  const shown = r.ok && state.plots.ac.update(r);
  if (r.ok) state.plots.noise.update(r);
  if (r.ok) state.plots.z.update(r);
  const canonicalValues = fragmentMap(state.canonical); // parsed once: its process here, the controls' values below
  const proc = canonicalValues.get('proc');
  if (proc && proc !== state.schemaProc) loadSchema(proc).then(() => render(response, fragment, fromLink, ms, pageProblems));
  // A result for an older request (a newer one is on its way) must not put
  // its values back into the controls: an edit made meanwhile would be lost
  // when the next edit is built from them. Only the newest request's
  // canonical form replaces what the user has set.
  const latest = fragment === state.requested;
  if (latest) state.values = canonicalValues;
  const problems = [...pageProblems, ...(r.problems || [])];
  const bad = new Set(problems.map((p) => p.key));
  const v = (k) => state.values.get(k) ?? schemaDefault(k);
  const pick = { stage: v('stage'), load: v('load'), bias: v('bias') };
  state.controls.show(state.values, pick, bad);
  if (latest && !fromLink && !problems.length && state.canonical) writeLink(state.canonical, link.timer === null);
  showNotice(fragment, problems, null); // an evaluation failure is shown in the status line
  const rs = parseSI(v('rs') || '0').value || 0;
  const rl = v('rl') === 'inf' ? Infinity : parseSI(v('rl') || 'inf').value ?? Infinity;
  // The schematic depends on the topology only: redraw it when that changes.
  const picture = { stage: pick.stage, pol: v('pol'), load: pick.load, rs: rs > 0, rl: rl !== Infinity };
  const pictureKey = JSON.stringify(picture);
  if (pictureKey !== state.pictureKey) {
    state.anchors = drawSchematic($('schematic'), { stage: pick.stage, pol: v('pol'), load: pick.load, rs, rl });
    $('schematic-caption').textContent = captionFor(pick.stage, v('pol'), pick.load);
    state.pictureKey = pictureKey;
  }

  renderWarnings($('warnings'), r);
  annotateSchematic($('schematic'), state.anchors, r, formatSI);
  if (!r.ok) {
    state.renderGeneration++; // a pending second half of an earlier result must not fill the tables again
    const why = (r.error || err || {}).message || 'no operating point found';
    status(`No result: ${why}`, 'bad');
    const nr = $('no-result');
    nr.hidden = false;
    nr.textContent = `No figures for this design: ${why}. Change the setting named above${(r.error || {}).key ? ` (${r.error.key})` : ''} and the results come back.`;
    for (const id of ['midband', 'op', 'smallsignal', 'estimates']) clear($(id));
    state.plots.ac.update(null);
    state.plots.noise.update(null);
    state.plots.z.update(null);
    clear($('roots'));
    drawSPlane($('splane'), [], []);
    document.body.dataset.state = 'no-result';
    return;
  }
  $('no-result').hidden = true;
  // What a slider step is for comes first: the figures, the plots and the
  // status line. The tables further down follow once that frame is drawn
  // (the data-state 'ready' waits for them), so they never hold the plots back.
  renderMidband($('midband'), r);
  if (shown && state.firstPlotAt === null) {
    state.firstPlotAt = performance.now();
    document.body.dataset.firstPlotMs = String(Math.round(state.firstPlotAt));
  }
  status(`Computed in ${ms.toFixed(1)} ms (${r.iterations} Newton iterations).`, 'ok');
  document.body.dataset.state = 'rendering';
  const generation = ++state.renderGeneration;
  afterFrame(() => {
    if (generation !== state.renderGeneration) return; // a newer result took over
    renderOP($('op'), r);
    renderSmallSignal($('smallsignal'), r);
    renderEstimates($('estimates'), r);
    renderRoots($('roots'), r);
    drawSPlane($('splane'), r.poles || [], r.zeros || []);
    document.body.dataset.state = 'ready';
    if (state.aids) state.aids.update(r, state.canonical); // design aids, see aids/index.js
  });
}

/** Runs fn in a task after the next frame has been produced. */
function afterFrame(fn) {
  requestAnimationFrame(() => setTimeout(fn, 0));
}

function captionFor(stage, pol, load) {
  const s = { cs: 'Common-source', cg: 'Common-gate', sf: 'Source-follower' }[stage] || stage;
  const l = { r: 'resistor', active: 'current-source', diode: 'diode-connected' }[load] || load;
  return `${s} stage, ${pol === 'p' ? 'p' : 'n'}-type amplifying device M1, ${l} load.`;
}

/** Shows fragment problems, with the link text as given (never as markup). */
function showNotice(fragment, problems, error) {
  const box = $('notice');
  clear(box);
  if (!problems.length && !error) {
    box.hidden = true;
    return;
  }
  box.hidden = false;
  if (problems.length) {
    const keys = [...new Set(problems.map((p) => p.key || '(whole link)'))];
    box.appendChild(h('p', { class: 'notice-title', text: `This link has ${problems.length} problem${problems.length > 1 ? 's' : ''} (${keys.join(', ')}). The other settings were applied; the bad ones keep their defaults.` }));
    box.appendChild(
      h(
        'ul',
        {},
        problems.map((p) => h('li', {}, h('code', { text: p.key ? `${p.key}${p.value !== '' ? '=' + p.value : ''}` : '(link)' }), `: ${p.message}`)),
      ),
    );
    box.appendChild(h('p', { class: 'notice-link' }, 'Link as given: ', h('code', { class: 'given', text: fragment.length > 600 ? fragment.slice(0, 600) + '…' : fragment })));
  }
  if (error && !problems.length) box.appendChild(h('p', { class: 'notice-error', text: error.message }));
}

function setupToolbar() {
  const opBox = $('schematic-op');
  const showOP = () => $('schematic').classList.toggle('op-hidden', !opBox.checked);
  opBox.addEventListener('change', showOP);
  showOP();
  $('copy-link').addEventListener('click', async () => {
    const url = `${location.href.split('#')[0]}#${state.canonical || currentHash()}`;
    const out = $('copy-out');
    try {
      await navigator.clipboard.writeText(url);
      out.textContent = 'Link copied.';
    } catch {
      clear(out);
      const input = h('input', { type: 'text', readonly: true, value: url, 'aria-label': 'link to this design', class: 'link-out' });
      out.appendChild(h('span', { text: 'Copy this link: ' }));
      out.appendChild(input);
      input.select();
    }
  });
  $('export-csv').addEventListener('click', () => {
    if (state.result) download(new Blob([sweepCSV(state.result)], { type: 'text/csv' }), 'stagewright-sweep.csv');
  });
  $('export-json').addEventListener('click', () => {
    if (state.result) download(new Blob([JSON.stringify(state.result, null, 1)], { type: 'application/json' }), 'stagewright-result.json');
  });
  $('png-ac').addEventListener('click', async () => {
    const b = await state.plots.ac.png(`Frequency response — ${state.canonical}`);
    if (b) download(b, 'stagewright-frequency-response.png');
  });
  $('png-noise').addEventListener('click', async () => {
    const b = await state.plots.noise.png(`Noise density — ${state.canonical}`);
    if (b) download(b, 'stagewright-noise.png');
  });
  $('png-z').addEventListener('click', async () => {
    const b = await state.plots.z.png(`Input and output impedance — ${state.canonical}`);
    if (b) download(b, 'stagewright-impedance.png');
  });
  $('png-splane').addEventListener('click', () => svgToPng($('splane'), 'stagewright-poles-zeros.png'));
}

function svgToPng(svg, name) {
  const text = new XMLSerializer().serializeToString(svg);
  const style = '<style>.ax{stroke:#39404d;stroke-width:1}.pole{stroke:#b3261e;stroke-width:2;fill:none}.zero{stroke:#1f5fa8;stroke-width:2;fill:none}.lbl{font:11px sans-serif;fill:#39404d}</style>';
  const withStyle = text.replace(/>/, `>${style}`);
  const url = URL.createObjectURL(new Blob([withStyle], { type: 'image/svg+xml' }));
  const img = new Image();
  img.onload = () => {
    const scale = 2;
    const c = document.createElement('canvas');
    c.width = 320 * scale;
    c.height = 200 * scale;
    const ctx = c.getContext('2d');
    ctx.fillStyle = '#fff';
    ctx.fillRect(0, 0, c.width, c.height);
    ctx.drawImage(img, 0, 0, c.width, c.height);
    URL.revokeObjectURL(url);
    c.toBlob((b) => b && download(b, name), 'image/png');
  };
  img.src = url;
}

async function main() {
  document.body.dataset.state = 'starting';
  status('Starting the engine…');
  // The engine first: its worker unpacks and compiles the WebAssembly while
  // this thread builds the rest of the page.
  const starting = state.engine.start();
  state.controls = new Controls($('pickers'), $('controls'), onEdit);
  state.plots.ac = frequencyPlot($('plot-ac'), $('readout-ac'));
  state.plots.noise = noisePlot($('plot-noise'), $('readout-noise'));
  state.plots.z = impedancePlot($('plot-z'), $('readout-z'));
  setupToolbar();
  startSaved({
    box: $('saved-box'), engine: aidEngine, download, current: () => ({ result: state.result }),
    open: (f) => { writeLink(f, true); evaluate(f, { fromLink: false }); },
  });
  state.aids = startAids({ engine: aidEngine, plots: state.plots, schema: () => state.schema, go: (f) => { writeLink(f, true); evaluate(f, { fromLink: false }); } });
  // "Your process" (process/index.js): after the design aids, reached from the header too
  const proc = startProcess({ engine: aidEngine, download, canonical: () => state.canonical, go: (f) => { writeLink(f, true); evaluate(f, { fromLink: false }); } });
  document.querySelector('.results').appendChild(proc.section);
  $('goto-proc').addEventListener('click', () => {
    proc.section.scrollIntoView({ block: 'start' });
    $('proc-file').focus({ preventScroll: true });
  });
  let schemaReady;
  let info;
  try {
    info = await starting;
    document.body.dataset.engineMs = String(Math.round(info.initMs));
    const proc = fragmentMap(currentHash()).get('proc');
    schemaReady = loadSchema(proc && /^[a-z0-9]{1,16}$/.test(proc) ? proc : 'd180').catch(() => loadSchema('d180'));
  } catch (err) {
    fatal(err.message);
    return;
  }
  window.addEventListener('pagehide', flushLink);
  document.addEventListener('visibilitychange', () => document.visibilityState === 'hidden' && flushLink());
  window.addEventListener('hashchange', () => {
    if (currentHash() === state.canonical) return;
    dropLink();
    evaluate(currentHash(), { fromLink: true });
  });
  // The schema and the first evaluation travel together (see evaluate).
  await evaluate(currentHash(), { fromLink: true, schemaReady: schemaReady.catch((err) => fatal(err.message)) });
  aidEngine.start(info.module);
}

$('build-version').textContent = PAGE_VERSION;
main();
// for the browser tests: the split fragment helper of the page
window.stagewrightPage = {
  splitFragment,
  formatSI,
  canonical: () => state.canonical,
  result: () => state.result,
  /** Times n evaluations of a fragment in the worker (ms each), for the benchmark test. */
  async time(fragment, n) {
    const out = [];
    for (let i = 0; i < n; i++) out.push((await state.engine.call('evaluate', fragment)).ms);
    return out;
  },
};
