// "Transfer and swing": the DC transfer curve with the operating point and
// the region runs, the usable input range and output swing with the limits
// that bind, and the harmonic distortion at the amplitude `amp`.
import { panel, note, numberField, showField, table, num, db, h, clear, Chart, markPoint, AID_COLOURS, callAid } from './common.js';

const REGION_WORDS = { saturation: 'saturated', triode: 'triode', subthreshold: 'weak inversion (saturated)', cutoff: 'off', none: '' };

export function transferPanel(ctx) {
  const p = panel('aid-transfer', 'Transfer and swing');
  const amp = numberField('aid-amp', 'input amplitude', 'V', (t) => ctx.edit([['amp', t]]), { title: 'Amplitude of the input sine for the distortion figures (key amp)' });
  p.head.appendChild(amp.wrap);
  const grid = h('div', { class: 'aid-two' });
  const plotBox = h('div', { class: 'plot aid-plot', id: 'plot-transfer', role: 'img', 'aria-label': 'Output DC level against input DC level, operating point marked, regions shaded' });
  const legend = h('p', { class: 'legend-key aid-legend' });
  const numbers = h('div', { id: 'transfer-numbers' });
  const dist = h('div', { id: 'distortion' });
  grid.append(h('div', {}, plotBox, legend), h('div', {}, numbers, dist));
  const msg = note();
  p.body.append(grid, msg);
  const chart = new Chart(plotBox, { xLabel: 'input DC level (V)', yLabel: 'output DC level (V)', xUnit: '', yUnit: '', series: [{ label: 'vout' }] });
  let trace = null;
  chart.under = (u, c) => {
    if (!trace) return;
    const r = devicePixelRatio;
    for (const run of trace.runs || []) {
      const x0 = u.valToPos(trace.vin[run.from], 'x', true);
      const x1 = u.valToPos(trace.vin[run.to], 'x', true);
      const key = run.region1 === 'saturation' && run.region2 !== 'triode' ? 'saturation' : run.region1 === 'saturation' ? 'triode' : run.region1;
      c.fillStyle = AID_COLOURS.regions[key] || 'rgba(0,0,0,0.04)';
      c.fillRect(x0, u.bbox.top, Math.max(r, x1 - x0), u.bbox.height);
    }
    // the usable input range
    c.save();
    c.strokeStyle = '#1b7f3b';
    c.setLineDash([5 * r, 3 * r]);
    c.lineWidth = r;
    for (const x of [trace.in_lo, trace.in_hi]) {
      if (x == null) continue;
      const px = u.valToPos(x, 'x', true);
      c.beginPath();
      c.moveTo(px, u.bbox.top);
      c.lineTo(px, u.bbox.top + u.bbox.height);
      c.stroke();
    }
    c.restore();
  };
  chart.overlay = (u, c) => {
    if (!trace) return;
    const i = trace.op_index;
    markPoint(u, c, trace.vin[i], trace.vout[i], 'operating point');
  };

  function showLegend(tr) {
    clear(legend);
    const seen = new Map();
    for (const run of tr.runs || []) {
      const key = run.region1 === 'saturation' && run.region2 !== 'triode' ? 'saturation' : run.region1 === 'saturation' ? 'triode' : run.region1;
      const words = run.region2 && run.region2 !== 'none' ? `M1 ${REGION_WORDS[run.region1] || run.region1}, M2 ${REGION_WORDS[run.region2] || run.region2}` : `M1 ${REGION_WORDS[run.region1] || run.region1}`;
      if (!seen.has(words)) seen.set(words, key);
    }
    legend.append('Shaded by region: ');
    let first = true;
    for (const [words, key] of seen) {
      if (!first) legend.append(' · ');
      first = false;
      legend.append(h('span', { class: `aid-region region-${key}`, text: words }));
    }
    legend.append(' · dashed green: usable input range.');
  }

  return {
    section: p.section,
    show(values) {
      showField(amp.input, values('amp'));
    },
    async refresh(fragment, still) {
      msg.textContent = '';
      try {
        const { result: tr } = await callAid(ctx.engine, 'transfer', fragment);
        if (!still()) return;
        trace = tr;
        chart.update([tr.vin, tr.vout]);
        showLegend(tr);
        clear(numbers);
        numbers.append(
          table('Usable range (operating-point behaviour kept)', ['', 'low end', 'high end', 'span'], [
            ['input', num(tr.in_lo, 4, 'V'), num(tr.in_hi, 4, 'V'), num(tr.in_hi - tr.in_lo, 4, 'V')],
            ['output', num(tr.out_lo, 4, 'V'), num(tr.out_hi, 4, 'V'), num(tr.swing, 4, 'V')],
          ], { id: 'swing-table' }),
          h('p', { class: 'aid-note', id: 'swing-limits', text: `The input range ends where ${tr.limit_lo || '—'} (low end) and ${tr.limit_hi || '—'} (high end); the output swing is ${num(tr.swing, 4, 'V')} peak to peak.` }),
          table(`Swing around the operating point (output at ${num(tr.out_op, 4, 'V')})`, ['', 'headroom', 'until'], [
            ['output up', num(tr.headroom_hi, 4, 'V'), tr.limit_out_hi || '—'],
            ['output down', num(tr.headroom_lo, 4, 'V'), tr.limit_out_lo || '—'],
            ['symmetric swing (twice the smaller)', num(tr.swing_sym, 4, 'V'), ''],
          ], { id: 'headroom-table', numeric: (i) => i === 1 }),
        );
      } catch (err) {
        if (!still()) return;
        trace = null;
        chart.update(null);
        clear(numbers);
        msg.textContent = `No transfer curve: ${err.message}`;
      }
      try {
        const { result: l } = await callAid(ctx.engine, 'distortion', fragment);
        if (!still()) return;
        const tdb = (x) => (x > 0 ? 20 * Math.log10(x) : null);
        clear(dist);
        dist.append(
          table(`Distortion at ${num(l.amp, 3, 'V')} input amplitude`, ['', 'from the waveform (DFT)', 'Taylor estimate'], [
            ['HD2', db(l.hd2_db), db(tdb(l.taylor_hd2))],
            ['HD3', db(l.hd3_db), db(tdb(l.taylor_hd3))],
            ['THD', db(l.thd_db), '—'],
          ], { id: 'distortion-table' }),
          h('p', {
            class: `aid-note ${l.small_signal_ok ? '' : 'aid-warn'}`,
            id: 'distortion-note',
            text: l.small_signal_ok
              ? 'The Taylor estimate agrees with the waveform: the small-signal picture holds at this amplitude.'
              : 'The waveform and the Taylor estimate disagree by more than 10 %: at this amplitude the stage bends more than its small-signal derivatives say — the small-signal picture stops holding.',
          }),
        );
      } catch (err) {
        if (!still()) return;
        clear(dist);
        dist.append(h('p', { class: 'aid-note aid-warn', text: `No distortion figures: ${err.message}` }));
      }
    },
  };
}
