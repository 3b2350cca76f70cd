// "Size to a spec": targets (t.*), the inputs the search may move (vary)
// and their ranges (lo.*, hi.*), Search with progress and Cancel, the
// result per target, or why no design meets them; Apply loads the found
// design through the fragment.
import { panel, note, numberField, showField, table, num, h, clear } from './common.js';
import { Job } from './job.js';

const TARGETS = [
  ['t.gain', 'least gain', 'V/V'], ['t.f3db', 'least bandwidth f3db', 'Hz'], ['t.gbw', 'least gain–bandwidth', 'Hz'],
  ['t.idd', 'most supply current', 'A'], ['t.power', 'most power', 'W'], ['t.swing', 'least output swing', 'V'],
  ['t.noise', 'most input noise (rms)', 'V'], ['t.margin', 'least saturation margin', 'V'],
];
const VARS = [['w', 'width', 'm'], ['l', 'length', 'm'], ['id', 'drain current', 'A'], ['rd', 'drain resistor', 'Ω'], ['rs', 'source resistor', 'Ω'], ['vin', 'input level', 'V'],
  ['lw', 'load width', 'm'], ['ll', 'load length', 'm'], ['vout', 'output level (current-source load)', 'V']];
// The at-most targets that may be made hard (key hard), and the objectives (key obj).
const HARDABLE = ['idd', 'power', 'noise'];
const OBJECTIVES = [['none', 'nothing more (the first design that meets them)'], ['power', 'least power'], ['area', 'least area W·L'], ['noise', 'least input noise']];

/**
 * The sentence of an infeasible search: the core's message already begins
 * with "no design meets every target", which is not said twice.
 */
export function noTargetMet(message) {
  const rest = String(message || '').replace(/^no design meets every target[;:,.]?\s*/i, '');
  return rest ? `No design meets every target: ${rest}` : 'No design meets every target.';
}

export function sizingPanel(ctx) {
  const p = panel('aid-size', 'Size to a spec');
  const targetBox = h('fieldset', { class: 'aid-set' }, h('legend', { text: 'Targets (empty or 0: none)' }));
  const hardBoxes = {};
  const targetFields = TARGETS.map(([key, label, unit]) => {
    const f = numberField(`aid-${key.replace('.', '-')}`, label, unit, (t) => ctx.edit([[key, t === '' ? '0' : t]]), { title: `key ${key}` });
    const name = key.slice(2);
    if (HARDABLE.includes(name)) {
      const box = h('input', { type: 'checkbox', id: `aid-hard-${name}` });
      box.addEventListener('change', () => {
        const set = HARDABLE.filter((k) => hardBoxes[k].checked);
        ctx.edit([['hard', set.length ? set.join('.') : 'none']]);
      });
      hardBoxes[name] = box;
      targetBox.append(f.wrap, h('label', { class: 'aid-check aid-hard', for: `aid-hard-${name}`, title: 'key hard' }, box, ` a hard cap: never exceeded, even in a compromise`));
    } else targetBox.appendChild(f.wrap);
    return { key, f };
  });
  const objSelect = h('select', { id: 'aid-obj', title: 'key obj' }, OBJECTIVES.map(([v, label]) => h('option', { value: v, text: label })));
  objSelect.addEventListener('change', () => ctx.edit([['obj', objSelect.value]]));
  targetBox.appendChild(h('label', { class: 'aid-field', for: 'aid-obj' }, 'Once every target is met, find ', objSelect));
  const varyBox = h('fieldset', { class: 'aid-set' }, h('legend', { text: 'Inputs the search may move, and their ranges' }));
  const varRows = VARS.map(([key, label, unit]) => {
    const box = h('input', { type: 'checkbox', id: `aid-vary-${key}` });
    box.addEventListener('change', () => {
      const set = varRows.filter((r) => r.box.checked).map((r) => r.key);
      ctx.edit([['vary', set.length ? set.join('.') : 'none']]);
    });
    const row = h('div', { class: 'aid-var' }, h('label', { class: 'aid-check', for: `aid-vary-${key}` }, box, ` ${label} `, h('code', { text: key })));
    let lo = null;
    let hi = null;
    if (key !== 'vin') {
      lo = numberField(`aid-lo-${key}`, 'from', unit, (t) => ctx.edit([[`lo.${key}`, t]]), { size: 6, title: `key lo.${key}` });
      hi = numberField(`aid-hi-${key}`, 'to', unit, (t) => ctx.edit([[`hi.${key}`, t]]), { size: 6, title: `key hi.${key}` });
      row.append(lo.wrap, hi.wrap);
    } else row.append(h('span', { class: 'aid-note', text: ' 0 … supply' }));
    varyBox.appendChild(row);
    return { key, box, lo, hi, row };
  });
  const searchBtn = h('button', { type: 'button', id: 'size-search', text: 'Search' });
  const cancelBtn = h('button', { type: 'button', id: 'size-cancel', text: 'Cancel', disabled: true });
  const applyBtn = h('button', { type: 'button', id: 'size-apply', text: 'Apply the found design', disabled: true });
  const bar = h('progress', { id: 'size-progress', max: 1, value: 0, 'aria-label': 'search progress' });
  const progressText = h('span', { class: 'aid-progress-text', id: 'size-progress-text', 'aria-live': 'polite' });
  const verdict = h('div', { id: 'size-verdict', 'aria-live': 'polite' });
  const out = h('div', { id: 'size-result' });
  const msg = note();
  p.body.append(h('div', { class: 'aid-two' }, targetBox, varyBox), h('div', { class: 'aid-controls' }, searchBtn, cancelBtn, bar, progressText, applyBtn), verdict, out, msg);
  const job = new Job(ctx.engine, 'sizeStart');
  let found = null;

  function showResult(s, ms) {
    clear(verdict);
    clear(out);
    found = s.fragment || null;
    applyBtn.disabled = !found;
    const cls = s.feasible ? 'aid-good' : 'aid-bad';
    verdict.append(h('p', { class: `aid-verdict ${cls}`, id: 'size-message', text: s.feasible ? `Found a design that meets every target (${s.evaluations} evaluations, ${(ms / 1000).toFixed(2)} s).` : noTargetMet(s.message) }));
    if (!s.feasible && s.conflicts && s.conflicts.length) {
      verdict.append(h('p', { class: 'aid-note', id: 'size-conflicts', text: `Targets that traded against each other during the search: ${s.conflicts.map((c) => `${c.pair[0]} and ${c.pair[1]}`).join('; ')}.` }));
    }
    if (s.cancelled) verdict.append(h('p', { class: 'aid-note', text: 'The search was cancelled; this is the best design found so far.' }));
    out.append(table(s.feasible ? 'Targets at the found design' : 'Targets at the best compromise', ['target', 'kind', 'wanted', 'achieved', 'margin', 'met', 'binds'],
      (s.targets || []).map((t) => [t.key, t.kind === 'min' ? 'at least' : 'at most', num(t.target, 4, t.unit), num(t.value, 4, t.unit),
        t.margin == null ? '—' : `${(100 * t.margin).toFixed(1)} %`, t.met ? 'yes' : 'no', t.binds ? 'binds' : '']),
      { numeric: (i) => i >= 2 && i <= 4, id: 'size-targets' }));
    out.append(table('Inputs moved', ['input', 'from', 'to', 'start', 'found'],
      (s.variables || []).map((v) => [v.key, num(v.lo, 3), num(v.hi, 3), num(v.start, 4), num(v.value, 4)]), { id: 'size-vars' }));
  }

  searchBtn.addEventListener('click', async () => {
    if (job.running) return;
    searchBtn.disabled = true;
    cancelBtn.disabled = false;
    applyBtn.disabled = true;
    msg.textContent = '';
    bar.value = 0;
    progressText.textContent = 'starting…';
    document.body.dataset.sizeState = 'running';
    try {
      const { state, ms } = await job.run(ctx.canonical(), (done, total) => {
        bar.value = total ? done / total : 0;
        progressText.textContent = `${done} of at most ${total} evaluations`;
      });
      bar.value = 1;
      progressText.textContent = `${state.result.evaluations} evaluations`;
      showResult(state.result, ms);
      document.body.dataset.sizeMs = String(Math.round(ms));
      document.body.dataset.sizeState = state.result.feasible ? 'feasible' : 'infeasible';
    } catch (err) {
      progressText.textContent = '';
      msg.textContent = `The search did not run: ${err.message}`;
      document.body.dataset.sizeState = 'failed';
    } finally {
      searchBtn.disabled = false;
      cancelBtn.disabled = true;
    }
  });
  cancelBtn.addEventListener('click', () => job.cancel());
  applyBtn.addEventListener('click', () => {
    if (found) ctx.go(found);
  });

  return {
    section: p.section,
    show(values, relevant) {
      for (const { key, f } of targetFields) {
        const v = values(key);
        showField(f.input, v === '0' || v === undefined ? '' : v);
      }
      const hard = (values('hard') || '').split('.');
      for (const k of HARDABLE) hardBoxes[k].checked = hard.includes(k);
      objSelect.value = values('obj') || 'none';
      const vary = (values('vary') || '').split('.');
      for (const r of varRows) {
        r.box.checked = vary.includes(r.key);
        if (r.lo) showField(r.lo.input, values(`lo.${r.key}`) || '');
        if (r.hi) showField(r.hi.input, values(`hi.${r.key}`) || '');
        r.row.classList.toggle('aid-irrelevant', !relevant(r.key));
      }
    },
    async refresh() {},
  };
}
