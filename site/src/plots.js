// Frequency-response and noise plots with uPlot, plus their readouts and
// markers. Colours are the page's own (see style.css for the same values).
import uPlot from 'uplot';
import { formatSI } from './si.js';

export const COLOURS = {
  mag: '#1f5fa8', // magnitude, dB
  phase: '#b5561b', // phase, degrees
  noiseOut: '#6a3d9a',
  noiseIn: '#1b7f5b',
  zin: '#8a4b0f', // input impedance
  zout: '#2c6e8f', // output impedance
  marker: '#555b66',
  grid: '#e3e6ea',
  axis: '#39404d',
};

const FONT = '12px system-ui, sans-serif';

function axis(extra) {
  return {
    stroke: COLOURS.axis,
    font: FONT,
    labelFont: FONT,
    grid: { stroke: COLOURS.grid, width: 1 },
    ticks: { stroke: COLOURS.grid, width: 1 },
    ...extra,
  };
}

const isDecade = (v) => v > 0 && Math.abs(Math.log10(v) - Math.round(Math.log10(v))) < 1e-6;
// On a log axis, grid lines at decades only; the ticks still mark 2…9.
const decadeGrid = { stroke: COLOURS.grid, width: 1, filter: (u, splits) => splits.map((v) => (isDecade(v) ? v : null)) };
// The labels of a log axis see every split: uPlot's own thinning of a short
// axis kept every n-th decade counted from its end, decadeLabels every n-th
// counted from 10⁰, and where the two disagreed no label was left (seen at
// 390 px: the noise plot's density axis had none).
const allSplits = (u, splits) => splits;

// Decade labels, thinned so they never overlap: every k-th decade where k
// keeps about 64 CSS pixels per label.
function decadeLabels(u, splits, axisIdx, unit, digits) {
  const scale = u.scales[u.axes[axisIdx].scale || 'x'];
  const decades = Math.max(1, Math.log10(scale.max / scale.min));
  const horizontal = axisIdx === 0;
  const px = (horizontal ? u.bbox.width : u.bbox.height) / devicePixelRatio;
  const every = Math.max(1, Math.ceil((decades * (horizontal ? 64 : 26)) / Math.max(px, 1)));
  return splits.map((v) => {
    if (v == null || !isDecade(v)) return '';
    const e = Math.round(Math.log10(v));
    return e % every === 0 ? formatSI(v, digits, unit) : '';
  });
}

const hzValues = (u, splits, axisIdx) => decadeLabels(u, splits, axisIdx, 'Hz', 3);

/** Draws vertical markers (f, label) over the plot area. */
function markerHook(getMarkers) {
  return (u) => {
    const ctx = u.ctx;
    const { left, top, height } = u.bbox;
    ctx.save();
    ctx.strokeStyle = COLOURS.marker;
    ctx.fillStyle = COLOURS.marker;
    ctx.setLineDash([4 * devicePixelRatio, 3 * devicePixelRatio]);
    ctx.lineWidth = devicePixelRatio;
    ctx.font = `${11 * devicePixelRatio}px system-ui, sans-serif`;
    let row = 0;
    for (const m of getMarkers()) {
      if (!(m.f > 0)) continue;
      const x = Math.round(u.valToPos(m.f, 'x', true));
      if (x < left || x > left + u.bbox.width) continue;
      ctx.beginPath();
      ctx.moveTo(x, top);
      ctx.lineTo(x, top + height);
      ctx.stroke();
      const text = m.label;
      const w = ctx.measureText(text).width;
      const tx = x + 4 * devicePixelRatio + w > left + u.bbox.width ? x - 4 * devicePixelRatio - w : x + 4 * devicePixelRatio;
      ctx.fillText(text, tx, top + (14 + 14 * row) * devicePixelRatio);
      row = (row + 1) % 2;
    }
    ctx.restore();
  };
}

/** A plot that can be given new data and keeps its size in step with its box. */
class Plot {
  constructor(box, readout, opts, makeData) {
    this.box = box;
    this.readout = readout;
    this.opts = opts;
    this.makeData = makeData;
    this.u = null;
    this.result = null;
    new ResizeObserver(() => this.resize()).observe(box);
  }

  size() {
    const w = Math.max(260, Math.floor(this.box.clientWidth));
    const h = Math.round(Math.min(320, Math.max(200, w * 0.45)));
    return { width: w, height: h };
  }

  resize() {
    if (!this.u) return;
    const s = this.size();
    if (s.width !== this.u.width || s.height !== this.u.height) this.u.setSize(s);
  }

  update(result) {
    this.result = result;
    const data = this.makeData(result);
    if (!data) {
      if (this.u) {
        this.u.destroy();
        this.u = null;
      }
      return false;
    }
    if (!this.u) {
      this.u = new uPlot({ ...this.opts, ...this.size() }, data, this.box);
    } else {
      this.u.setData(data);
    }
    return true;
  }

  /** The plot as a PNG Blob on a white background with a title line. */
  async png(title) {
    if (!this.u) return null;
    const src = this.u.ctx.canvas;
    const pad = 28 * devicePixelRatio;
    const c = document.createElement('canvas');
    c.width = src.width;
    c.height = src.height + pad;
    const ctx = c.getContext('2d');
    ctx.fillStyle = '#ffffff';
    ctx.fillRect(0, 0, c.width, c.height);
    ctx.fillStyle = '#1d2433';
    ctx.font = `${13 * devicePixelRatio}px system-ui, sans-serif`;
    ctx.fillText(title, 8 * devicePixelRatio, 18 * devicePixelRatio);
    ctx.drawImage(src, 0, pad);
    return new Promise((resolve) => c.toBlob(resolve, 'image/png'));
  }
}

/** The magnitude/phase plot of result.ac with −3 dB and unity-gain markers. */
export function frequencyPlot(box, readout) {
  let markers = [];
  const plot = new Plot(
    box,
    readout,
    {
      title: '',
      legend: { show: false },
      cursor: { drag: { x: true, y: false }, points: { size: 7 } },
      scales: { x: { time: false, distr: 3 }, db: { auto: true }, deg: { auto: true } },
      axes: [
        axis({ values: hzValues, label: 'frequency', size: 40, grid: decadeGrid, filter: allSplits }),
        axis({ scale: 'db', label: 'magnitude (dB)', size: 56, values: (u, s) => s.map((v) => `${v}`) }),
        axis({ scale: 'deg', side: 1, label: 'phase (°)', size: 56, grid: { show: false }, values: (u, s) => s.map((v) => `${v}°`) }),
      ],
      series: [
        {},
        { label: 'magnitude', scale: 'db', stroke: COLOURS.mag, width: 2 },
        { label: 'phase', scale: 'deg', stroke: COLOURS.phase, width: 1.5, dash: [6, 3] },
      ],
      hooks: {
        draw: [markerHook(() => markers)],
        setCursor: [
          (u) => {
            const i = u.cursor.idx;
            if (i == null) {
              readout.textContent = defaultReadout(plot.result);
              return;
            }
            const f = u.data[0][i];
            const m = u.data[1][i];
            const p = u.data[2][i];
            readout.textContent = `at ${formatSI(f, 4, 'Hz')}: magnitude ${m == null ? '—' : m.toFixed(2) + ' dB'}, phase ${p == null ? '—' : p.toFixed(1) + '°'}`;
          },
        ],
      },
    },
    (r) => {
      const ac = r && r.ac;
      if (!ac || !ac.f || ac.f.length < 2) return null;
      markers = [];
      if (ac.f3db != null) markers.push({ f: ac.f3db, label: `−3 dB ${formatSI(ac.f3db, 3, 'Hz')}` });
      if (ac.ugf != null) markers.push({ f: ac.ugf, label: `unity gain ${formatSI(ac.ugf, 3, 'Hz')}` });
      return [ac.f, ac.mag_db, ac.phase_deg];
    },
  );
  return withReadout(plot, readout, defaultReadout);
}

/** Makes plot.update also write the summary line text(r) under the plot (empty when nothing is shown). */
function withReadout(plot, readout, text) {
  const origUpdate = plot.update.bind(plot);
  plot.update = (r) => {
    const shown = origUpdate(r);
    readout.textContent = shown ? text(r) : '';
    return shown;
  };
  return plot;
}

function defaultReadout(r) {
  const ac = r && r.ac;
  if (!ac) return '';
  const parts = [`DC gain ${ac.dc_gain_db == null ? '—' : ac.dc_gain_db.toFixed(2) + ' dB'}`];
  parts.push(`−3 dB at ${ac.f3db == null ? '— (none in the sweep)' : formatSI(ac.f3db, 4, 'Hz')}`);
  parts.push(`unity gain at ${ac.ugf == null ? '— (gain below 1 or no crossing)' : formatSI(ac.ugf, 4, 'Hz')}`);
  if (ac.phase_at_ugf != null) parts.push(`phase there ${ac.phase_at_ugf.toFixed(1)}°`);
  return parts.join(' · ') + ' — move the pointer over the plot to read values.';
}

/**
 * The frame shared by the log–log plots against frequency: no legend, a
 * horizontal zoom, decade grids and labels on both axes.
 */
function logLogFrame(yLabel, yUnit) {
  return {
    legend: { show: false },
    cursor: { drag: { x: true, y: false }, points: { size: 7 } },
    scales: { x: { time: false, distr: 3 }, y: { distr: 3 } },
    axes: [
      axis({ values: hzValues, label: 'frequency', size: 40, grid: decadeGrid, filter: allSplits }),
      axis({ label: yLabel, size: 64, grid: decadeGrid, filter: allSplits, values: (u, s, i) => decadeLabels(u, s, i, yUnit, 2) }),
    ],
  };
}

/** The output and input-referred noise density plot of result.noise. */
export function noisePlot(box, readout) {
  let markers = [];
  const plot = new Plot(
    box,
    readout,
    {
      ...logLogFrame('density (V/√Hz)', ''),
      series: [
        {},
        { label: 'output', stroke: COLOURS.noiseOut, width: 2 },
        { label: 'input-referred', stroke: COLOURS.noiseIn, width: 2, dash: [6, 3] },
      ],
      hooks: {
        draw: [markerHook(() => markers)],
        setCursor: [
          (u) => {
            const i = u.cursor.idx;
            if (i == null) {
              readout.textContent = noiseReadout(plot.result);
              return;
            }
            readout.textContent = `at ${formatSI(u.data[0][i], 4, 'Hz')}: output ${formatSI(u.data[1][i], 4, 'V/√Hz')}, input-referred ${formatSI(u.data[2][i], 4, 'V/√Hz')}`;
          },
        ],
      },
    },
    (r) => {
      const n = r && r.noise;
      if (!n || !n.f || n.f.length < 2) return null;
      markers = n.corner != null ? [{ f: n.corner, label: `flicker corner ${formatSI(n.corner, 3, 'Hz')}` }] : [];
      return [n.f, n.out, n.in];
    },
  );
  return withReadout(plot, readout, noiseReadout);
}

function noiseReadout(r) {
  const n = r && r.noise;
  if (!n) return '';
  const band = n.band ? `${formatSI(n.band[0], 3, 'Hz')} … ${formatSI(n.band[1], 3, 'Hz')}` : 'the band';
  return `input-referred rms over ${band}: ${formatSI(n.in_rms, 4, 'V')} · flicker corner ${n.corner == null ? '—' : formatSI(n.corner, 4, 'Hz')}`;
}

/** The input and output impedance magnitudes of result.ac (zin, zout) against frequency. */
export function impedancePlot(box, readout) {
  const plot = new Plot(
    box,
    readout,
    {
      ...logLogFrame('impedance (Ω)', 'Ω'),
      series: [
        {},
        { label: 'input', stroke: COLOURS.zin, width: 2 },
        { label: 'output', stroke: COLOURS.zout, width: 2, dash: [6, 3] },
      ],
      hooks: {
        setCursor: [
          (u) => {
            const i = u.cursor.idx;
            if (i == null) {
              readout.textContent = impedanceReadout(plot.result);
              return;
            }
            readout.textContent = `at ${formatSI(u.data[0][i], 4, 'Hz')}: |Zin| ${formatSI(u.data[1][i], 4, 'Ω')}, |Zout| ${formatSI(u.data[2][i], 4, 'Ω')}`;
          },
        ],
      },
    },
    (r) => {
      const ac = r && r.ac;
      if (!ac || !ac.f || ac.f.length < 2 || !ac.zin || !ac.zout) return null;
      return [ac.f, ac.zin, ac.zout];
    },
  );
  return withReadout(plot, readout, impedanceReadout);
}

function impedanceReadout(r) {
  const ac = r && r.ac;
  if (!ac || !ac.zin || !ac.zout || !ac.f) return '';
  const n = ac.f.length - 1;
  return `|Zin| ${formatSI(ac.zin[0], 4, 'Ω')} at ${formatSI(ac.f[0], 3, 'Hz')}, ${formatSI(ac.zin[n], 4, 'Ω')} at ${formatSI(ac.f[n], 3, 'Hz')} · |Zout| ${formatSI(ac.zout[0], 4, 'Ω')} falling to ${formatSI(ac.zout[n], 4, 'Ω')} — move the pointer over the plot to read values.`;
}
