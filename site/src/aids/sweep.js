// "Sweep": any figure against any input (keys sw, sw.lo, sw.hi, sw.n), with
// the present design marked.
import { panel, note, numberField, showField, h, clear, Chart, markPoint, callAid, num } from './common.js';
import { exactSI } from '../si.js';
import { download, figureSweepCSV } from '../export.js';

const FIGURES = [
  ['gain', 'gain', 'V/V'], ['f3db', 'f3db', 'Hz'], ['ugf', 'unity-gain frequency', 'Hz'], ['gbw', 'gain–bandwidth', 'Hz'],
  ['in_rms', 'input noise (rms)', 'V'], ['power', 'power', 'W'], ['margin', 'saturation margin', 'V'], ['id', 'drain current', 'A'],
  ['gm_id', 'gm/ID', 'S/A'], ['rout', 'output resistance', 'Ω'], ['rin', 'input resistance', 'Ω'],
];

export function sweepPanel(ctx) {
  const p = panel('aid-sweep', 'Sweep');
  const keySel = h('select', { id: 'sweep-key', 'aria-label': 'input to sweep (key sw)' });
  const figSel = h('select', { id: 'sweep-figure', 'aria-label': 'figure to plot' });
  for (const [k, label] of FIGURES) figSel.appendChild(h('option', { value: k, text: label }));
  const lo = numberField('sweep-lo', 'from', '', (t) => ctx.edit([['sw.lo', t]]), { size: 6, title: 'key sw.lo' });
  const hi = numberField('sweep-hi', 'to', '', (t) => ctx.edit([['sw.hi', t]]), { size: 6, title: 'key sw.hi' });
  const n = numberField('sweep-n', 'points', '', (t) => ctx.edit([['sw.n', t]]), { size: 4, title: 'key sw.n' });
  const controls = h('div', { class: 'aid-controls' },
    h('label', { class: 'aid-field', for: 'sweep-key' }, h('span', { class: 'aid-label', text: 'input' }), keySel),
    h('label', { class: 'aid-field', for: 'sweep-figure' }, h('span', { class: 'aid-label', text: 'figure' }), figSel),
    lo.wrap, hi.wrap, n.wrap);
  const csvBtn = h('button', { type: 'button', class: 'small', id: 'sweep-csv', text: 'Sweep table as CSV', disabled: true });
  csvBtn.addEventListener('click', () => {
    if (last) download(new Blob([figureSweepCSV(last, ctx.canonical())], { type: 'text/csv' }), `stagewright-sweep-${last.key}.csv`);
  });
  p.head.appendChild(csvBtn);
  const box = h('div', { class: 'plot aid-plot', id: 'plot-sweep', role: 'img', 'aria-label': 'a figure against the swept input' });
  const readout = h('p', { class: 'readout', id: 'sweep-readout' });
  const msg = note();
  p.body.append(controls, box, readout, msg);
  let chart = null;
  let last = null;
  let figure = 'gain';

  keySel.addEventListener('change', () => ctx.edit([['sw', keySel.value], ['sw.lo', null], ['sw.hi', null]]));
  figSel.addEventListener('change', () => {
    figure = figSel.value;
    draw();
  });

  function draw() {
    if (!last) return;
    const ser = last.series.find((s) => s.name === figure);
    const meta = FIGURES.find((f) => f[0] === figure);
    const unit = meta ? meta[2] : '';
    const ys = ser ? ser.values : [];
    const positive = ys.every((v) => v == null || v > 0);
    const spec = { xLabel: last.key, yLabel: `${meta ? meta[1] : figure} (${unit})`, xLog: last.log, yLog: positive && ['Hz', 'Ω', 'A', 'W'].includes(unit), yUnit: unit === 'V/V' ? '' : unit, series: [{ label: figure }] };
    const specKey = JSON.stringify(spec);
    if (!chart || chart.specKey !== specKey) {
      if (chart) chart.update(null);
      clear(box);
      chart = new Chart(box, spec);
      chart.specKey = specKey;
    }
    const px = last.present.value;
    const py = last.present.figures ? last.present.figures[figure] : null;
    chart.overlay = (u, c) => markPoint(u, c, px, py, 'present');
    chart.update([last.values, ys]);
    showField(lo.input, exactSI(last.values[0]));
    showField(hi.input, exactSI(last.values[last.values.length - 1]));
    showField(n.input, String(last.values.length));
    readout.textContent = `${last.values.length} points of ${last.key} from ${num(last.values[0], 4)} to ${num(last.values[last.values.length - 1], 4)}; present design: ${last.key} = ${num(px, 4)}, ${meta ? meta[1] : figure} = ${num(py, 4, unit)}.${last.failures && last.failures.length ? ` ${last.failures.length} points without a result.` : ''}`;
  }

  return {
    section: p.section,
    show(values, relevant, schema) {
      const info = schema.find((k) => k.key === 'sw');
      if (info && keySel.options.length !== (info.choices || []).length) {
        clear(keySel);
        for (const c of info.choices || []) keySel.appendChild(h('option', { value: c, text: c }));
      }
      const key = values('sw') || 'w';
      if (document.activeElement !== keySel && keySel.value !== key) keySel.value = key;
      showField(lo.input, values('sw.lo') || '');
      showField(hi.input, values('sw.hi') || '');
      showField(n.input, values('sw.n') || '');
    },
    async refresh(fragment, still) {
      msg.textContent = '';
      try {
        const { result } = await callAid(ctx.engine, 'sweep', fragment);
        if (!still()) return;
        last = result;
        csvBtn.disabled = false;
        draw();
      } catch (err) {
        if (!still()) return;
        last = null;
        csvBtn.disabled = true;
        if (chart) chart.update(null);
        readout.textContent = '';
        msg.textContent = `No sweep: ${err.message}`;
      }
    },
  };
}
