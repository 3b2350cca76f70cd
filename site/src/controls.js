// Controls built from the key schema (design.Schema in the core): a picker
// for each word key, and a slider with a numeric field for each number key.
// The controls hold no design state of their own: they show a Map of
// key → fragment text and report edits through onEdit(key, text).
import { h, clear } from './dom.js';
import { parseSI, formatSI, exactSI, roundSig } from './si.js';

const SLIDER_STEPS = 400; // positions of a slider; an arrow key moves one step
const PICKERS = ['stage', 'pol', 'load', 'bias']; // shown above the schematic
const HIDDEN = ['v']; // the format version is not a control
// Groups whose settings belong to one design-aid panel, which shows them
// (transfer: amp; Monte Carlo: mc, seed; sweep: sw…; pin; sizing: t.*,
// vary, lo.*, hi.*): the left column holds only what shapes the design.
const AID_GROUPS = ['design aids', 'targets', 'sizing'];
// A key of an aid group that shapes the evaluation itself, and the group of
// the left column that shows it.
const LEFT_GROUP = { corner: 'process' };
const GROUP_TITLES = { sweep: 'Frequency sweep and noise band' };
/** Whether a key overrides a device parameter of the process (n.* or p.*). */
export const isOverride = (key) => /^[np]\./.test(key);
// A unit with a power or a product (V²·F, F/m², m²/(V·s), m⁻³) takes no SI
// prefix: its value is shown in plain or exponent form (1e-25, not 1e-10f).
const plainUnit = (unit) => /[²³⁻·]/.test(unit || '');

const CHOICE_WORDS = {
  stage: { cs: 'common source', cg: 'common gate', sf: 'source follower' },
  pol: { n: 'n-type', p: 'p-type' },
  load: { r: 'resistor', active: 'current source', diode: 'diode-connected' },
  bias: { vin: 'input level', id: 'drain current', gmid: 'gm/ID' },
};

/** Whether a key matters for the stage, load and bias shown (empty list = always). */
export function relevant(info, stage, load, bias) {
  const ok = (list, v) => !list || list.length === 0 || list.includes(v);
  if (Array.isArray(info.when) && info.when.length) return info.when.some((c) => ok(c.stages, stage) && ok(c.loads, load) && ok(c.biases, bias));
  return ok(info.stages, stage) && ok(info.loads, load) && ok(info.biases, bias);
}

const infOK = (info) => Boolean(info.inf_ok || (info.choices || []).includes('inf'));
const isWordKey = (info) => Array.isArray(info.choices) && info.choices.length > 0 && !infOK(info);

/**
 * The bounds of a number key now: a bound that follows another key
 * (min_from / max_from, e.g. vin ≤ vdd) takes that key's current value.
 */
export function bounds(info, valueOf = () => undefined) {
  const follow = (from, fallback) => {
    if (!from) return fallback;
    const v = parseSI(valueOf(from) ?? '').value;
    return v === undefined ? fallback : v;
  };
  return { min: follow(info.min_from, Number(info.min)), max: follow(info.max_from, Number(info.max)) };
}

/** Maps a slider position (0…SLIDER_STEPS) to a value and back. */
export function sliderScale(info, valueOf) {
  const { min, max } = bounds(info, valueOf);
  const inf = infOK(info);
  const useLog = info.log && max > 0;
  const lo = useLog ? (min > 0 ? min : max * 1e-9) : min;
  const zeroAt0 = useLog && !(min > 0);
  const n = SLIDER_STEPS;
  const first = zeroAt0 ? 1 : 0;
  const last = inf ? n - 1 : n;
  const toValue = (pos) => {
    if (zeroAt0 && pos <= 0) return 0;
    if (inf && pos >= n) return Infinity;
    const t = (pos - first) / (last - first);
    const v = useLog ? lo * (max / lo) ** t : lo + (max - lo) * t;
    const r = info.integer ? Math.round(v) : roundSig(v, 3);
    return Math.min(max, Math.max(min, r));
  };
  const toPos = (v) => {
    if (v === Infinity) return inf ? n : last;
    if (zeroAt0 && v <= 0) return 0;
    let t = useLog ? Math.log(v / lo) / Math.log(max / lo) : (v - lo) / (max - lo);
    if (!Number.isFinite(t)) t = 0;
    return Math.round(first + Math.min(1, Math.max(0, t)) * (last - first));
  };
  return { toValue, toPos, steps: n };
}

function parseValue(info, text, valueOf) {
  const s = String(text).trim();
  if (infOK(info) && /^(inf|∞|infinity|open|none)$/i.test(s)) return { value: Infinity };
  const r = parseSI(s, info.unit && info.unit.length <= 2 ? info.unit : '');
  if (r.error) return r;
  const v = r.value;
  if (info.integer && !Number.isInteger(v)) return { error: `${info.label} takes whole numbers` };
  const { min, max } = bounds(info, valueOf);
  const zeroOK = Boolean(info.zero_means);
  const below = info.min_exclusive ? v <= min : v < min;
  const above = info.max_exclusive ? v >= max : v > max;
  if ((below || above) && !(zeroOK && v === 0)) {
    const lo = `${info.min_exclusive ? 'above' : 'from'} ${formatSI(min, 4, info.unit || '')}${info.min_from ? ` (${info.min_from})` : ''}`;
    const hi = `${info.max_exclusive ? 'below' : 'up to'} ${formatSI(max, 4, info.unit || '')}${info.max_from ? ` (${info.max_from})` : ''}`;
    const extra = [infOK(info) ? 'inf' : '', zeroOK ? `0 (${info.zero_means})` : ''].filter(Boolean).join(' or ');
    return { error: `must be ${lo} ${hi}${extra ? `, or ${extra}` : ''}` };
  }
  return { value: v };
}

function fragmentText(info, v) {
  if (v === Infinity) return 'inf';
  return exactSI(v);
}

function displayText(info, text) {
  if (text === 'inf') return 'inf';
  const r = parseSI(text);
  if (r.error) return text;
  if (info.integer) return String(r.value);
  if (plainUnit(info.unit)) return Number(r.value.toPrecision(4)).toString().replace('e+', 'e');
  return formatSI(r.value, 4).replace('\u2009', '').replace('−', '-');
}

export class Controls {
  /**
   * pickerBox: where the stage/polarity/load/bias pickers go;
   * groupBox: where the grouped sliders go; onEdit(key, text, {final}) reports a change.
   */
  constructor(pickerBox, groupBox, onEdit) {
    this.pickerBox = pickerBox;
    this.groupBox = groupBox;
    this.onEdit = onEdit;
    this.schema = [];
    this.byKey = new Map();
    this.rows = new Map(); // key → {row, slider, field, msg, info, scale}
    this.values = new Map();
  }

  build(schema) {
    this.schema = schema;
    this.byKey = new Map(schema.map((k) => [k.key, k]));
    this.rows.clear();
    clear(this.pickerBox);
    clear(this.groupBox);
    for (const key of PICKERS) {
      const info = this.byKey.get(key);
      if (info) this.pickerBox.appendChild(this.picker(info));
    }
    const groups = new Map();
    for (const info of schema) {
      if (PICKERS.includes(info.key) || HIDDEN.includes(info.key)) continue;
      const g = LEFT_GROUP[info.key] || info.group || 'other';
      if (AID_GROUPS.includes(g)) continue;
      if (!groups.has(g)) groups.set(g, []);
      groups.get(g).push(info);
    }
    const order = ['device', 'bias', 'load', 'source and load', 'process', 'sweep'];
    const rank = (g) => (order.includes(g) ? order.indexOf(g) : order.length);
    const sorted = [...groups].sort((a, b) => rank(a[0]) - rank(b[0]));
    for (const [group, infos] of sorted) {
      const plain = infos.filter((i) => !isOverride(i.key));
      const overrides = infos.filter((i) => isOverride(i.key));
      const title = GROUP_TITLES[group] || group.charAt(0).toUpperCase() + group.slice(1);
      const fs = h('fieldset', { class: 'group', 'data-group': group }, h('legend', { text: title }));
      for (const info of plain) fs.appendChild(this.control(info));
      if (overrides.length) {
        // The summary counts the parameters the design sets (see show).
        this.overrideSummary = h('summary', { id: 'overrides-summary', text: 'device parameters of the process' });
        this.overrideKeys = overrides.map((i) => i.key);
        const det = h('details', { class: 'overrides' }, this.overrideSummary);
        for (const pol of ['n', 'p']) {
          const these = overrides.filter((i) => i.key.startsWith(pol + '.'));
          if (!these.length) continue;
          det.appendChild(h('h4', { text: pol === 'n' ? 'n-type devices' : 'p-type devices' }));
          for (const info of these) det.appendChild(this.control(info));
        }
        fs.appendChild(det);
      }
      this.groupBox.appendChild(fs);
    }
  }

  picker(info) {
    const name = `pick-${info.key}`;
    const words = CHOICE_WORDS[info.key] || {};
    const fs = h('fieldset', { class: 'picker', 'data-key': info.key }, h('legend', { text: info.label || info.key }));
    const opts = h('div', { class: 'seg' });
    for (const c of info.choices || []) {
      const id = `${name}-${c}`;
      const input = h('input', { type: 'radio', name, id, value: c });
      input.addEventListener('change', () => {
        if (input.checked) this.onEdit(info.key, c, { final: true, structural: true });
      });
      opts.appendChild(h('span', { class: 'seg-item' }, input, h('label', { for: id, text: words[c] || c, title: info.doc || '' })));
    }
    fs.appendChild(opts);
    this.rows.set(info.key, { row: fs, info, radios: opts });
    return fs;
  }

  control(info) {
    const id = `k-${info.key.replace(/\./g, '-')}`;
    if (isWordKey(info)) {
      const sel = h('select', { id, 'aria-describedby': `${id}-doc` });
      for (const c of info.choices) sel.appendChild(h('option', { value: c, text: c }));
      sel.addEventListener('change', () => this.onEdit(info.key, sel.value, { final: true, structural: info.key === 'proc' }));
      const row = h(
        'div',
        { class: 'ctl ctl-word', 'data-key': info.key },
        h('label', { for: id }, h('span', { class: 'ctl-label', text: info.label || info.key }), h('code', { class: 'ctl-key', text: info.key })),
        sel,
        h('p', { class: 'ctl-doc', id: `${id}-doc`, text: info.doc || '' }),
      );
      this.rows.set(info.key, { row, info, select: sel });
      return row;
    }
    const valueOf = (k) => this.values.get(k) ?? this.defaultOf(k);
    const scaleNow = () => sliderScale(info, valueOf);
    const scale = scaleNow();
    const slider = h('input', {
      type: 'range', id: `${id}-slider`, min: 0, max: scale.steps, step: 1,
      'aria-label': `${info.label || info.key} (slider${info.log ? ', logarithmic' : ''})`,
    });
    const field = h('input', {
      type: 'text', id, inputmode: 'decimal', spellcheck: 'false', autocomplete: 'off', size: 8,
      'aria-describedby': `${id}-msg ${id}-doc`,
    });
    const msg = h('p', { class: 'ctl-msg', id: `${id}-msg`, 'aria-live': 'polite' });
    const unit = info.unit ? h('span', { class: 'unit', text: info.unit }) : null;
    const row = h(
      'div',
      { class: 'ctl', 'data-key': info.key },
      h('label', { for: id }, h('span', { class: 'ctl-label', text: info.label || info.key }), h('code', { class: 'ctl-key', text: info.key })),
      h('div', { class: 'ctl-inputs' }, slider, h('span', { class: 'field' }, field, unit)),
      msg,
      h('p', { class: 'ctl-doc', id: `${id}-doc`, text: info.doc || '' }),
    );
    const entry = { row, info, slider, field, msg, scale: scaleNow };
    slider.addEventListener('input', () => {
      const v = scaleNow().toValue(Number(slider.value));
      const text = fragmentText(info, v);
      field.value = displayText(info, text);
      this.setMessage(entry, '');
      this.onEdit(info.key, text, { final: false, slider: true });
    });
    slider.addEventListener('change', () => {
      const v = scaleNow().toValue(Number(slider.value));
      this.onEdit(info.key, fragmentText(info, v), { final: true, slider: true });
    });
    const commit = () => {
      const r = parseValue(info, field.value, valueOf);
      if (r.error) {
        this.setMessage(entry, `${r.error}; keeping ${displayText(info, this.values.get(info.key) ?? '')}`);
        return;
      }
      this.setMessage(entry, '');
      slider.value = String(scaleNow().toPos(r.value));
      this.onEdit(info.key, fragmentText(info, r.value), { final: true });
    };
    field.addEventListener('change', commit);
    field.addEventListener('keydown', (e) => {
      if (e.key === 'Enter') {
        e.preventDefault();
        commit();
      } else if (e.key === 'Escape') {
        field.value = displayText(info, this.values.get(info.key) ?? '');
        this.setMessage(entry, '');
      }
    });
    this.rows.set(info.key, entry);
    return row;
  }

  defaultOf(key) {
    const info = this.byKey.get(key);
    return info ? defaultText(info, this.values.get('stage')) : undefined;
  }

  setMessage(entry, text) {
    entry.msg.textContent = text;
    entry.field.setAttribute('aria-invalid', text ? 'true' : 'false');
    entry.row.classList.toggle('invalid', Boolean(text));
  }

  /**
   * Shows `values` (Map key → fragment text); leaves a field being typed in
   * alone. Writes only what differs: an equal write to an input still costs
   * style and layout work on every slider step.
   */
  show(values, { stage, load, bias }, badKeys = new Set()) {
    this.values = values;
    if (this.overrideSummary) {
      const set = this.overrideKeys.filter((k) => values.has(k)).length;
      const text = `device parameters of the process (${set ? `${set} changed` : 'none changed'} of ${this.overrideKeys.length})`;
      if (this.overrideSummary.textContent !== text) this.overrideSummary.textContent = text;
    }
    for (const [key, entry] of this.rows) {
      const info = entry.info;
      const rel = relevant(info, stage, load, bias);
      if (entry.row.hidden !== !rel) entry.row.hidden = !rel;
      const text = values.has(key) ? values.get(key) : defaultText(info, stage);
      if (entry.radios) {
        for (const input of entry.radios.querySelectorAll('input')) {
          const on = input.value === text;
          if (input.checked !== on) input.checked = on;
        }
        continue;
      }
      if (entry.select) {
        if (entry.select.value !== text) entry.select.value = text;
        continue;
      }
      // The shown text and slider position follow from the value text and,
      // for a bound that follows another key, that key's value: computed
      // again only when one of them changed.
      const from = (k) => (k ? values.get(k) ?? this.defaultOf(k) : '');
      const cacheKey = `${text}|${stage}|${from(info.min_from)}|${from(info.max_from)}`;
      if (entry.cacheKey !== cacheKey) {
        entry.cacheKey = cacheKey;
        entry.shownText = displayText(info, text);
        const v = text === 'inf' ? Infinity : parseSI(text).value;
        entry.shownPos = v === undefined ? null : String(entry.scale().toPos(v));
      }
      const active = document.activeElement === entry.field;
      const invalid = entry.row.classList.contains('invalid');
      if (!active && !invalid && entry.field.value !== entry.shownText) entry.field.value = entry.shownText;
      if (entry.shownPos !== null && document.activeElement !== entry.slider && entry.slider.value !== entry.shownPos) entry.slider.value = entry.shownPos;
      if (entry.row.classList.contains('flagged') !== badKeys.has(key)) entry.row.classList.toggle('flagged', badKeys.has(key));
    }
  }

  /** Clears the "last good value" message of a key once a new value is in. */
  clearMessage(key) {
    const e = this.rows.get(key);
    if (e && e.msg) this.setMessage(e, '');
  }
}

export function defaultText(info, stage) {
  if (info.default_word !== undefined && info.default_word !== '') return info.default_word;
  // A text key (pin) is empty by default; its number default 0 is no value
  // (read as '0' it was a pinned design that nobody pinned).
  if (info.text) return '';
  if (stage && info.stage_defaults && info.stage_defaults[stage] !== undefined) return exactSI(Number(info.stage_defaults[stage]));
  if (info.default === null || info.default === undefined) return infOK(info) ? 'inf' : '';
  return exactSI(Number(info.default));
}
