// "Corners": every figure at each process corner, temperature and supply,
// every device's region (a row with a device out of saturation flagged),
// and, for a current bias, what holds it (keys vddtol, hold).
import { panel, note, numberField, showField, table, num, h, clear, callAid } from './common.js';

const HOLDS = [
  ['mirror', 'a mirror (diode-connected copies)'],
  ['fixed', 'fixed bias voltages'],
  ['ideal', 'an ideal current'],
];

export function cornersPanel(ctx) {
  const p = panel('aid-corners', 'Corners');
  const tol = numberField('aid-vddtol', 'supply ±', '', (t) => ctx.edit([['vddtol', t]]), {
    size: 5, title: 'Supply spread of the table, a fraction of vdd: 0.1 = ±10 %; 0 for vdd alone (key vddtol)',
  });
  const holdSel = h('select', { id: 'aid-hold', 'aria-label': 'current bias held by (key hold)' },
    HOLDS.map(([v, label]) => h('option', { value: v, text: label })));
  holdSel.addEventListener('change', () => ctx.edit([['hold', holdSel.value]]));
  const holdWrap = h('label', { class: 'aid-field', for: 'aid-hold' }, h('span', { class: 'aid-label', text: 'bias held by' }), holdSel);
  const controls = h('div', { class: 'aid-controls' }, tol.wrap, holdWrap);
  const box = h('div', { id: 'corners-table' });
  const summary = h('p', { class: 'aid-note', id: 'corners-summary', 'aria-live': 'polite' });
  const msg = note();
  p.body.append(
    controls,
    h('p', { class: 'aid-note', text: 'The design as it stands at each process corner (first letter n-type, second p-type; s slow, f fast), temperature and supply. The region column names the device with the least saturation margin; a row where a device has left saturation is marked.' }),
    summary, box, msg,
  );
  return {
    section: p.section,
    show(values) {
      showField(tol.input, values('vddtol'));
      const bias = values('bias');
      holdWrap.hidden = bias !== 'id' && bias !== 'gmid';
      if (document.activeElement !== holdSel) holdSel.value = values('hold');
    },
    async refresh(fragment, still) {
      msg.textContent = '';
      try {
        const { result: rows } = await callAid(ctx.engine, 'corners', fragment);
        if (!still()) return;
        clear(box);
        const flagged = rows.filter((r) => r.ok && r.flag);
        summary.textContent = flagged.length === 0
          ? `Every device stays saturated in all ${rows.length} rows.`
          : `A device leaves saturation in ${flagged.length} of ${rows.length} rows (marked ⚠).`;
        const grid = table('', ['corner', '°C', 'supply', 'gain', 'f3db', 'GBW', 'ID', 'vout', 'vout drift', 'power', 'least margin', 'region', 'input noise'],
          rows.map((r) => [
            r.corner, r.temp.toFixed(0), num(r.vdd, 3, 'V'),
            ...(r.ok
              ? [num(r.gain, 4, 'V/V'), num(r.f3db, 3, 'Hz'), num(r.gbw, 3, 'Hz'), num(r.id, 3, 'A'), num(r.vout, 3, 'V'),
                num(r.vout_drift, 2, 'V'), num(r.power, 3, 'W'), num(r.margin, 3, 'V'),
                r.flag ? h('span', { class: 'aid-warn', text: `⚠ ${r.region}` }) : (r.region || '—'), num(r.in_rms, 3, 'V')]
              : [h('span', { class: 'aid-warn', text: `no operating point: ${(r.error && r.error.message) || ''}` }), '', '', '', '', '', '', '', '', '']),
          ]),
          { numeric: (i) => i !== 11, id: 'corners-grid' });
        grid.querySelectorAll('tbody tr').forEach((tr, i) => {
          if (rows[i].ok && rows[i].flag) tr.classList.add('aid-flagged');
        });
        box.append(grid);
      } catch (err) {
        if (!still()) return;
        clear(box);
        summary.textContent = '';
        msg.textContent = `No corners: ${err.message}`;
      }
    },
  };
}
