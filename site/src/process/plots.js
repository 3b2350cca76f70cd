// The four plots of a fit: the data points against the model's lines, one
// colour per curve (a length, drain voltage or gate voltage of the table):
// ID against VGS on log and linear axes, gm/ID against ID, gds against VDS.
import { h, clear, Chart } from '../aids/common.js';

// Eight colours that stay apart in print and for the common colour-vision
// deficiencies (light to dark, blue to orange); more curves repeat them.
export const CURVE_COLOURS = ['#1f5fa8', '#c2410c', '#1b7f3b', '#6a3d9a', '#8a5a00', '#2c6e8f', '#b3261e', '#4a5262'];

const SPECS = [
  { id: 'id-log', from: 'id_vgs', title: 'ID against VGS (log)', xLabel: 'VGS (V)', yLabel: 'ID (A)', xUnit: 'V', yUnit: 'A', yLog: true },
  { id: 'id-lin', from: 'id_vgs', title: 'ID against VGS (linear)', xLabel: 'VGS (V)', yLabel: 'ID (A)', xUnit: 'V', yUnit: 'A' },
  { id: 'gmid', from: 'gmid_id', title: 'gm/ID against ID', xLabel: 'ID (A)', yLabel: 'gm/ID (S/A)', xUnit: 'A', xLog: true },
  { id: 'gds', from: 'gds_vds', title: 'gds against VDS', xLabel: 'VDS (V)', yLabel: 'gds (S)', xUnit: 'V', yUnit: 'S', yLog: true },
];

/**
 * Puts curves [{label, x, data, model}] on one x axis (the union of their
 * x values, sorted): [xs, data₀, model₀, data₁, model₁, …] with null where a
 * curve has no point, and where a log axis cannot show a value.
 */
export function alignCurves(curves, { xLog = false, yLog = false } = {}) {
  const ok = (v, log) => typeof v === 'number' && Number.isFinite(v) && (!log || v > 0);
  const xs = [...new Set(curves.flatMap((c) => (c.x || []).filter((x) => ok(x, xLog))))].sort((a, b) => a - b);
  const at = new Map(xs.map((x, i) => [x, i]));
  const out = [xs];
  for (const c of curves) {
    const d = new Array(xs.length).fill(null);
    const m = new Array(xs.length).fill(null);
    (c.x || []).forEach((x, i) => {
      if (!at.has(x)) return;
      const j = at.get(x);
      if (ok(c.data && c.data[i], yLog)) d[j] = c.data[i];
      if (ok(c.model && c.model[i], yLog)) m[j] = c.model[i];
    });
    out.push(d, m);
  }
  return out;
}

/**
 * Shortens the curves' labels ("L=180 nm VDS=1.80 V VBS=0.00 V") to what
 * tells them apart: {labels, common}, common being the parts all share.
 */
export function splitLabels(labels) {
  const parts = labels.map((l) => String(l).split(/\s+(?=[^\s=]+=)/));
  const common = parts.length > 1 ? parts[0].filter((p) => parts.every((q) => q.includes(p))) : [];
  return { labels: parts.map((ps) => ps.filter((p) => !common.includes(p)).join(' ') || ps.join(' ')), common: common.join(', ') };
}

/** The plots in box; update(plots, pol) draws a fit's plots, update(null) clears them. */
export function fitPlots(box) {
  const grid = h('div', { class: 'aid-four proc-plots' });
  const charts = SPECS.map((s) => {
    const plot = h('div', { class: 'plot aid-small', id: `proc-plot-${s.id}`, role: 'img', 'aria-label': `${s.title}: data points and the fitted model's lines` });
    const legend = h('ul', { class: 'proc-legend', id: `proc-legend-${s.id}` });
    const caption = h('figcaption', { text: s.title });
    grid.appendChild(h('figure', { class: 'aid-figure' }, caption, plot, legend));
    return { s, plot, legend, caption, chart: new Chart(plot, { ...s, height: 220, series: [] }) };
  });
  const key = h('p', { class: 'aid-note proc-key', text: 'Rings: the data; lines: the fitted model. Colours tell the curves apart (listed under each plot).' });
  box.append(grid, key);
  return {
    update(plots, pol = 'n') {
      const sign = pol === 'p' ? '|' : '';
      for (const c of charts) {
        const curves = (plots && plots[c.s.from]) || [];
        clear(c.legend);
        // a p-type table is shown in magnitudes (the fit works in the n-channel sense)
        c.caption.textContent = pol === 'p' ? c.s.title.replace(/\b(VGS|VDS|ID)\b/g, '|$1|') : c.s.title;
        if (!curves.length) {
          c.chart.update(null);
          continue;
        }
        const series = [];
        const names = splitLabels(curves.map((cv) => cv.label));
        if (names.common) c.caption.textContent += `, ${names.common}`;
        curves.forEach((cv, i) => {
          const colour = CURVE_COLOURS[i % CURVE_COLOURS.length];
          series.push({ label: `${cv.label} data`, stroke: colour, points: true }, { label: `${cv.label} model`, stroke: colour, width: 1.5, spanGaps: true });
          const swatch = h('span', { class: 'proc-swatch' });
          swatch.style.background = colour; // through the CSSOM: the page's CSP allows no style attribute
          c.legend.appendChild(h('li', {}, swatch, h('span', { text: names.labels[i] })));
        });
        c.chart.spec = {
          ...c.s,
          xLabel: c.s.xLabel.replace(/^(VGS|VDS|ID)/, `${sign}$1${sign}`),
          yLabel: c.s.yLabel.replace(/^(ID)/, `${sign}$1${sign}`),
          height: 220,
          series,
        };
        c.chart.update(null); // made again: the number of series changes with the table
        c.chart.update(alignCurves(curves, c.s));
      }
    },
  };
}
