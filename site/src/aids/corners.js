// "Corners": every figure at each process corner and temperature.
import { panel, note, table, num, h, clear, callAid } from './common.js';

export function cornersPanel(ctx) {
  const p = panel('aid-corners', 'Corners');
  const box = h('div', { id: 'corners-table' });
  const msg = note();
  p.body.append(h('p', { class: 'aid-note', text: 'The design as it stands (inputs and bias mode kept) at each demo process corner (first letter n-type, second p-type; s slow, f fast) and temperature.' }), box, msg);
  return {
    section: p.section,
    show() {},
    async refresh(fragment, still) {
      msg.textContent = '';
      try {
        const { result: rows } = await callAid(ctx.engine, 'corners', fragment);
        if (!still()) return;
        clear(box);
        box.append(
          table('', ['corner', '°C', 'gain', 'f3db', 'GBW', 'ID', 'vout', 'power', 'margin', 'M1 region', 'input noise'],
            rows.map((r) => [
              r.corner, r.temp.toFixed(0),
              ...(r.ok
                ? [num(r.gain, 4, 'V/V'), num(r.f3db, 3, 'Hz'), num(r.gbw, 3, 'Hz'), num(r.id, 3, 'A'), num(r.vout, 3, 'V'), num(r.power, 3, 'W'), num(r.margin, 3, 'V'), r.region || '—', num(r.in_rms, 3, 'V')]
                : [h('span', { class: 'aid-warn', text: `no operating point: ${(r.error && r.error.message) || ''}` }), '', '', '', '', '', '', '', '']),
            ]),
            { numeric: (i) => i !== 9, id: 'corners-grid' }),
        );
      } catch (err) {
        if (!still()) return;
        clear(box);
        msg.textContent = `No corners: ${err.message}`;
      }
    },
  };
}
