// "gm/ID charts": four small charts of M1's device in this process, polarity
// and length, with the present design marked.
import { panel, note, h, Chart, markPoint, callAid, num } from './common.js';

const SPECS = [
  { id: 'gmid-ic', title: 'gm/ID against inversion coefficient', x: 'ic', y: 'gm_id', xLog: true, xLabel: 'IC', yLabel: 'gm/ID (S/A)' },
  { id: 'idw-gmid', title: 'current density against gm/ID', x: 'gm_id', y: 'id_w', yLog: true, xLabel: 'gm/ID (S/A)', yLabel: 'ID/W (A/m)' },
  { id: 'gmro-gmid', title: 'intrinsic gain against gm/ID', x: 'gm_id', y: 'gm_ro', xLabel: 'gm/ID (S/A)', yLabel: 'gm·ro (V/V)' },
  { id: 'ft-gmid', title: 'transit frequency against gm/ID', x: 'gm_id', y: 'ft', yLog: true, xLabel: 'gm/ID (S/A)', yLabel: 'fT (Hz)', yUnit: 'Hz' },
];

export function chartsPanel(ctx) {
  const p = panel('aid-charts', 'gm/ID charts');
  const caption = h('p', { class: 'aid-note', id: 'charts-caption' });
  const grid = h('div', { class: 'aid-four' });
  const charts = SPECS.map((s) => {
    const box = h('div', { class: 'plot aid-small', id: `chart-${s.id}`, role: 'img', 'aria-label': s.title });
    grid.appendChild(h('figure', { class: 'aid-figure' }, h('figcaption', { text: s.title }), box));
    const c = new Chart(box, { xLabel: s.xLabel, yLabel: s.yLabel, xLog: s.xLog, yLog: s.yLog, yUnit: s.yUnit, height: 190, series: [{ label: s.y }] });
    return { s, c };
  });
  const msg = note();
  p.body.append(caption, grid, msg);
  return {
    section: p.section,
    show() {},
    async refresh(fragment, still) {
      msg.textContent = '';
      try {
        const { result: ch } = await callAid(ctx.engine, 'charts', fragment);
        if (!still()) return;
        const pm = ch.present;
        caption.textContent = `${ch.pol === 'p' ? 'p' : 'n'}-type device of ${ch.process}, W ${num(ch.w, 3, 'm')}, L ${num(ch.l, 3, 'm')}, ${(ch.temp_k - 273.15).toFixed(0)} °C, |VDS| ${num(ch.vds, 3, 'V')}; saturated points only.${pm ? ` Present design: gm/ID ${num(pm.gm_id, 3, 'S/A')}, IC ${num(pm.ic, 3)}.` : ' The present design has no operating point to mark.'}`;
        for (const { s, c } of charts) {
          // From the strongest gate drive down, gm/ID (and IC upwards) move
          // one way; deep in weak inversion gm/ID levels off at 1/(n·UT)
          // and its last digits wander, so only points that move x on by
          // 0.1 % are kept: the curve stays a function of x.
          const pts = [];
          const up = s.x === 'gm_id';
          for (let k = 0; k < ch.vgs.length; k++) {
            const i = up ? ch.vgs.length - 1 - k : k;
            const x = ch[s.x][i];
            const y = ch[s.y][i];
            if (!(ch.saturated[i] && x != null && y != null && x > 0 && (!s.yLog || y > 0))) continue;
            if (pts.length && !(x > pts[pts.length - 1][0] * 1.001)) continue;
            pts.push([x, y]);
          }
          c.overlay = (u, cx) => pm && markPoint(u, cx, pm[s.x], pm[s.y], 'present');
          c.update(pts.length > 1 ? [pts.map((q) => q[0]), pts.map((q) => q[1])] : null);
        }
      } catch (err) {
        if (!still()) return;
        for (const { c } of charts) c.update(null);
        msg.textContent = `No charts: ${err.message}`;
      }
    },
  };
}
