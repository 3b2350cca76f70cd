// Tables and figures of one evaluation result (see the result contract).
import { h, morph } from './dom.js';
import { formatSI } from './si.js';

const num = (v, unit = '', digits = 4) => (v === null || v === undefined ? '—' : formatSI(v, digits, unit));
const pct = (v) => (v === null || v === undefined ? '—' : `${v > 0 ? '+' : v < 0 ? '−' : ''}${Math.abs(v).toFixed(1)} %`);
const ohms = (v) => (v === null || v === undefined ? '∞ (open)' : formatSI(v, 4, 'Ω'));

/** The region word as a class name for its colour. */
export function regionClass(word) {
  const w = String(word || '').toLowerCase();
  if (w.includes('sat')) return 'tone-good';
  if (w.includes('triode') || w.includes('linear')) return 'tone-warn';
  if (w.includes('sub') || w.includes('weak')) return 'tone-weak';
  if (w.includes('off') || w.includes('cut')) return 'tone-off';
  if (w.includes('moderate')) return 'tone-mid';
  if (w.includes('strong')) return 'tone-good';
  return 'tone-neutral';
}

/** A small bar for the saturation margin VDS − VDsat (V), warning near zero. */
function marginBar(margin, vdd) {
  if (margin === null || margin === undefined) return h('span', { text: '—' });
  const full = Math.max(0.2, (vdd || 1.8) / 2);
  const frac = Math.max(0, Math.min(1, margin / full));
  const tone = margin < 0 ? 'bad' : margin < 0.1 ? 'warn' : 'good';
  const label = `${margin < 0 ? '−' : ''}${formatSI(Math.abs(margin), 3, 'V')}`;
  return h(
    'span',
    { class: `margin margin-${tone}`, title: 'saturation margin VDS − VDsat; below about 0.1 V the device is close to leaving saturation' },
    h('span', { class: 'margin-track', 'aria-hidden': 'true' }, h('span', { class: 'margin-fill', style: null, 'data-frac': frac.toFixed(3) })),
    h('span', { class: 'margin-text', text: label + (tone === 'warn' ? ' (close to triode)' : tone === 'bad' ? ' (not saturated)' : '') }),
  );
}

/** Sets the widths of the margin bars from data-frac (CSSOM, allowed by the page's CSP). */
function sizeBars(root) {
  for (const f of root.querySelectorAll('.margin-fill')) {
    const width = `${Number(f.dataset.frac) * 100}%`;
    if (f.style.width !== width) f.style.width = width;
  }
}

const OP_ROWS = [
  ['id', 'drain current ID', 'A'],
  ['vgs', 'VGS', 'V'],
  ['vds', 'VDS', 'V'],
  ['vbs', 'VBS', 'V'],
  ['vth', 'threshold VTH', 'V'],
  ['vov', 'overdrive VGS − VTH', 'V'],
  ['vdsat', 'VDsat', 'V'],
  ['margin', 'saturation margin VDS − VDsat', 'V'],
  ['region', 'region', ''],
  ['inversion', 'inversion', ''],
  ['gm_id', 'gm/ID', 'S/A'],
  ['ic', 'inversion coefficient', ''],
  ['n', 'slope factor n', ''],
  ['w', 'W', 'm'],
  ['l', 'L', 'm'],
  ['power', 'power (VDD × supply current)', 'W'],
];

const SS_ROWS = [
  ['gm', 'gm', 'S'],
  ['gmb', 'gmb', 'S'],
  ['gds', 'gds', 'S'],
  ['ro', 'ro', 'Ω'],
  ['cgs', 'Cgs', 'F'],
  ['cgd', 'Cgd', 'F'],
  ['cgb', 'Cgb', 'F'],
  ['cdb', 'Cdb', 'F'],
  ['csb', 'Csb', 'F'],
  ['ft', 'transit frequency fT', 'Hz'],
];

function cell(dev, key, unit, vdd) {
  if (!dev) return h('td', { class: 'na', text: '' });
  const v = dev[key];
  if (key === 'region' || key === 'inversion') return h('td', {}, h('span', { class: `chip ${regionClass(v)}`, text: v || '—' }));
  if (key === 'margin') return h('td', {}, marginBar(v, vdd));
  if (v === undefined) return h('td', { class: 'na', text: '' });
  return h('td', { class: 'num', text: num(v, unit) });
}

function deviceTable(caption, rows, r) {
  const vdd = r.nodes && r.nodes.vdd;
  const devs = [['M1 (amplifying)', r.op], ['M2 (load)', r.load_op]].filter(([, d]) => d);
  return h(
    'table',
    { class: 'grid' },
    h('caption', { text: caption }),
    h('thead', {}, h('tr', {}, h('th', { scope: 'col', text: 'quantity' }), devs.map(([n]) => h('th', { scope: 'col', text: n })))),
    h(
      'tbody',
      {},
      rows
        .filter(([k]) => devs.some(([, d]) => d[k] !== undefined))
        .map(([k, label, unit]) => h('tr', {}, h('th', { scope: 'row', text: label }), devs.map(([, d]) => cell(d, k, unit, vdd)))),
    ),
  );
}

export function renderOP(box, r) {
  if (!r.op) {
    morph(box, []);
    return;
  }
  const parts = [deviceTable('Operating point', OP_ROWS, r)];
  if (r.nodes) {
    const names = { in: 'in', out: 'out', vdd: 'VDD', src: 'source (RS)', gate: 'gate (cg)', sig: 'signal source DC', bias: 'load gate' };
    parts.push(
      h(
        'table',
        { class: 'grid compact' },
        h('caption', { text: 'DC node voltages' }),
        h('tbody', {}, Object.entries(r.nodes).map(([k, v]) => h('tr', {}, h('th', { scope: 'row', text: names[k] || k }), h('td', { class: 'num', text: num(v, 'V') })))),
      ),
    );
  }
  const sl = r.large_signal && r.large_signal.slew;
  if (sl) {
    // V/µs reads as designers quote slew; the current behind each is the stage's own.
    const perUs = (v) => (v == null ? '—' : `${(v / 1e6).toPrecision(3)} V/µs`);
    parts.push(
      h(
        'table',
        { class: 'grid compact', id: 'slew-table' },
        h('caption', { text: 'Slew rate into cl' }),
        h('tbody', {}, [
          h('tr', {}, h('th', { scope: 'row', text: 'rising' }), h('td', { class: 'num', text: perUs(sl.up) }), h('td', { class: 'num', text: num(sl.i_up, 'A') })),
          h('tr', {}, h('th', { scope: 'row', text: 'falling' }), h('td', { class: 'num', text: perUs(sl.down) }), h('td', { class: 'num', text: num(sl.i_down, 'A') })),
        ]),
      ),
    );
  }
  morph(box, parts);
  sizeBars(box);
}

export function renderSmallSignal(box, r) {
  morph(box, r.op ? [deviceTable('Small-signal parameters', SS_ROWS, r)] : []);
}

/** Midband gain, Rin, Rout beside the hand estimate and the % difference. */
export function renderMidband(box, r) {
  const m = r.midband;
  if (!m) {
    morph(box, []);
    return;
  }
  const parts = [];
  const hand = r.hand || {};
  const diff = r.diff_pct || {};
  const formula = hand.formula || {};
  const card = (title, exact, sub, handValue, d, f, id) =>
    h(
      'div',
      { class: 'card', id },
      h('div', { class: 'card-title', text: title }),
      h('div', { class: 'card-value', text: exact }),
      sub ? h('div', { class: 'card-sub', text: sub }) : null,
      h('div', { class: 'card-hand' }, h('span', { text: `hand: ${handValue}` }), f ? h('span', { class: 'formula', text: ` = ${f}` }) : null),
      h('div', { class: `card-diff ${d !== null && d !== undefined && Math.abs(d) > 20 ? 'big' : ''}`, text: `difference ${pct(d)}` }),
    );
  const g = m.gain;
  parts.push(
    card('midband gain', g === null ? '—' : formatSI(g, 4, 'V/V'), m.gain_db === null ? '' : `${m.gain_db.toFixed(2)} dB`, hand.gain == null ? '—' : formatSI(hand.gain, 4, 'V/V'), diff.gain, formula.gain, 'card-gain'),
  );
  parts.push(card('input resistance', ohms(m.rin), '', ohms(hand.rin), diff.rin, formula.rin, 'card-rin'));
  parts.push(card('output resistance', ohms(m.rout), '', ohms(hand.rout), diff.rout, formula.rout, 'card-rout'));
  const sq = r.square_law;
  if (sq) {
    parts.push(
      h(
        'p',
        { class: 'note square' },
        `Square-law hand model at the same ID: overdrive ${num(sq.vov, 'V')}, gm ${num(sq.gm, 'S')}, gain ${sq.gain == null ? '—' : formatSI(sq.gain, 4, 'V/V')}.`,
      ),
    );
  }
  morph(box, parts);
}

const EST_NAMES = {
  miller_input_pole: 'input pole (Miller)',
  output_pole: 'output pole',
  rhp_zero: 'right-half-plane zero',
  octc_f3db: '−3 dB by open-circuit time constants',
};

export function renderEstimates(box, r) {
  const est = r.estimates || {};
  const keys = Object.keys(est);
  if (!keys.length) {
    morph(box, []);
    return;
  }
  morph(box, [
    h(
      'table',
      { class: 'grid' },
      h('caption', { text: 'Hand estimates of frequencies' }),
      h('thead', {}, h('tr', {}, ['estimate', 'hand', 'exact', 'difference'].map((t) => h('th', { scope: 'col', text: t })))),
      h(
        'tbody',
        {},
        keys.map((k) =>
          h(
            'tr',
            {},
            h('th', { scope: 'row' }, EST_NAMES[k] || k.replace(/_/g, ' '), est[k].formula ? h('div', { class: 'formula', text: est[k].formula }) : null,
              est[k].caveat ? h('div', { class: 'caveat', 'data-estimate': k, text: est[k].caveat }) : null),
            h('td', { class: 'num', text: num(est[k].value, 'Hz') }),
            h('td', { class: 'num', text: num(est[k].exact, 'Hz') }),
            h('td', { class: 'num', text: pct(est[k].diff_pct) }),
          ),
        ),
      ),
    ),
  ]);
}

function rootText(p) {
  if (p.re === null || p.im === null) return '—';
  const mag = Math.hypot(p.re, p.im);
  const side = p.re > 0 ? 'right half-plane' : 'left half-plane';
  if (Math.abs(p.im) < 1e-9 * mag || p.im === 0) return `real, at ${formatSI(Math.abs(p.re), 4, 'Hz')} (${side})`;
  const q = mag / (2 * Math.abs(p.re));
  return `${formatSI(p.re, 4)} ${p.im < 0 ? '−' : '+'} j${formatSI(Math.abs(p.im), 4)} Hz, |s|/2π = ${formatSI(mag, 4, 'Hz')}, Q = ${q.toFixed(2)}`;
}

export function renderRoots(list, r) {
  const poles = r.poles || [];
  const zeros = r.zeros || [];
  const items = [];
  poles.forEach((p, i) => items.push(h('li', { class: i === r.dominant_pole ? 'dominant' : '' }, h('strong', { text: `pole ${i + 1}${i === r.dominant_pole ? ' (dominant)' : ''}: ` }), rootText(p))));
  zeros.forEach((z, i) => items.push(h('li', {}, h('strong', { text: `zero ${i + 1}: ` }), rootText(z))));
  if (!poles.length && !zeros.length) items.push(h('li', { text: 'none found' }));
  morph(list, items);
}

export function renderWarnings(box, r) {
  const w = r.warnings || [];
  morph(box, w.length ? [h('ul', {}, w.map((t) => h('li', { text: t })))] : []);
}
