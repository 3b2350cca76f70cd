// Shared pieces of the design-aid panels: the panel frame, number fields
// bound to fragment keys, tables, and small uPlot charts in the page's look.
import uPlot from 'uplot';
import { h, clear } from '../dom.js';
import { formatSI } from '../si.js';
import { COLOURS } from '../plots.js';

export { h, clear, formatSI };

export const AID_COLOURS = {
  line: COLOURS.mag,
  pinned: '#8a8f99', // the pinned reference, drawn under the present design
  marker: '#b3261e', // the present design
  bar: '#5b7fb0',
  grid: COLOURS.grid,
  axis: COLOURS.axis,
  // region runs of the transfer curve, light enough to print
  regions: { saturation: 'rgba(27,127,59,0.10)', triode: 'rgba(179,38,30,0.10)', subthreshold: 'rgba(75,90,138,0.12)', cutoff: 'rgba(93,100,112,0.14)' },
};

/** A panel of the results column: a heading, a line of controls and a body. */
export function panel(id, title) {
  const head = h('div', { class: 'plot-head' }, h('h2', { id: `${id}-title`, text: title }));
  const body = h('div', { class: 'aid-body', id: `${id}-body` });
  const section = h('section', { class: 'panel aid needs-result', id, 'aria-labelledby': `${id}-title` }, head, body);
  return { section, head, body };
}

/** A status line of a panel (progress, errors, notes). */
export function note(cls = '') {
  return h('p', { class: `aid-note ${cls}`, 'aria-live': 'polite' });
}

/** A labelled text field for an SI number, reported by onCommit(text) on Enter or change. */
export function numberField(id, label, unit, onCommit, { title = '', size = 7 } = {}) {
  const input = h('input', { type: 'text', id, inputmode: 'decimal', spellcheck: 'false', autocomplete: 'off', size, title });
  const commit = () => onCommit(input.value.trim());
  input.addEventListener('change', commit);
  input.addEventListener('keydown', (e) => {
    if (e.key === 'Enter') {
      e.preventDefault();
      commit();
    }
  });
  const wrap = h('label', { class: 'aid-field', for: id }, h('span', { class: 'aid-label', text: label }), h('span', { class: 'field' }, input, unit ? h('span', { class: 'unit', text: unit }) : null));
  return { wrap, input };
}

/** Sets a field's text unless the user is typing in it. */
export function showField(input, text) {
  if (document.activeElement !== input && input.value !== text) input.value = text;
}

/** A table with a header row and body rows of cells (strings or nodes); numbers right-aligned. */
export function table(caption, head, rows, { numeric = () => true, id } = {}) {
  const thead = h('thead', {}, h('tr', {}, head.map((c) => h('th', { scope: 'col', text: c }))));
  const tbody = h(
    'tbody',
    {},
    rows.map((r) => h('tr', {}, r.map((c, i) => (i === 0 ? h('th', { scope: 'row' }, c) : h('td', { class: numeric(i) ? 'num' : '' }, c))))),
  );
  return h('div', { class: 'table-wrap' }, h('table', { class: 'grid aid-table', id }, caption ? h('caption', { text: caption }) : null, thead, tbody));
}

export const num = (v, digits = 4, unit = '') => (v === null || v === undefined ? '—' : formatSI(v, digits, unit));
export const db = (v) => (v === null || v === undefined ? '—' : `${v.toFixed(1)} dBc`);

function axis(extra) {
  return {
    stroke: AID_COLOURS.axis,
    font: '11px system-ui, sans-serif',
    labelFont: '11px system-ui, sans-serif',
    grid: { stroke: AID_COLOURS.grid, width: 1 },
    ticks: { stroke: AID_COLOURS.grid, width: 1 },
    ...extra,
  };
}

const siValues = (unit, digits = 3) => (u, splits) => splits.map((v) => (v == null ? '' : formatSI(v, digits, unit)));

const isDecade = (v) => v > 0 && Math.abs(Math.log10(v) - Math.round(Math.log10(v))) < 1e-6;

// On a log axis: decades only, thinned to about 56 px (x) or 22 px (y) per label.
const decadeValues = (unit) => (u, splits, axisIdx) => {
  const scale = u.scales[axisIdx === 0 ? 'x' : 'y'];
  const decades = Math.max(1, Math.log10(scale.max / scale.min));
  const px = (axisIdx === 0 ? u.bbox.width : u.bbox.height) / devicePixelRatio;
  const every = Math.max(1, Math.ceil((decades * (axisIdx === 0 ? 56 : 22)) / Math.max(px, 1)));
  return splits.map((v) => (v != null && isDecade(v) && Math.round(Math.log10(v)) % every === 0 ? formatSI(v, 3, unit) : ''));
};
const decadeGrid = { stroke: AID_COLOURS.grid, width: 1, filter: (u, splits) => splits.map((v) => (isDecade(v) ? v : null)) };

/**
 * A small x–y chart that keeps its width in step with its box. spec:
 * {xLabel, yLabel, xUnit, yUnit, xLog, yLog, xDigits, xSpace (least pixels between x ticks, for long labels), height, bars,
 * series: [{label, stroke, dash, width, spanGaps (draw across nulls), points (markers only, no line; fill)}]}.
 * overlay(u, ctx) draws on top (markers, shading); under(u, ctx) below the lines.
 */
export class Chart {
  constructor(box, spec) {
    this.box = box;
    this.spec = spec;
    this.u = null;
    this.overlay = null;
    this.under = null;
    new ResizeObserver(() => this.resize()).observe(box);
  }

  size() {
    const w = Math.max(200, Math.floor(this.box.clientWidth));
    return { width: w, height: this.spec.height || Math.round(Math.min(260, Math.max(160, w * 0.5))) };
  }

  resize() {
    if (!this.u) return;
    const s = this.size();
    if (s.width !== this.u.width || s.height !== this.u.height) this.u.setSize(s);
  }

  options() {
    const s = this.spec;
    const bars = s.bars ? uPlot.paths.bars({ size: [0.9, 80] }) : undefined;
    return {
      legend: { show: false },
      cursor: { drag: { x: false, y: false }, points: { size: 6 } },
      scales: { x: { time: false, distr: s.xLog ? 3 : 1 }, y: { distr: s.yLog ? 3 : 1, ...(s.bars ? { range: (u, lo, hi) => [0, Math.max(1, hi * 1.08)] } : {}) } },
      axes: [
        axis({ label: s.xLabel, size: 34, space: s.xSpace || 50, values: s.xLog ? decadeValues(s.xUnit || '') : siValues(s.xUnit || '', s.xDigits), ...(s.xLog ? { grid: decadeGrid, filter: (u, splits) => splits } : {}) }),
        axis({ label: s.yLabel, size: 58, values: s.yLog ? decadeValues(s.yUnit || '') : siValues(s.yUnit || ''), ...(s.yLog ? { grid: decadeGrid, filter: (u, splits) => splits } : {}) }),
      ],
      series: [
        {},
        ...s.series.map((x) => ({
          label: x.label, stroke: x.stroke || AID_COLOURS.line, width: x.width || 2, dash: x.dash, spanGaps: !!x.spanGaps,
          ...(s.bars ? { fill: 'rgba(91,127,176,0.55)', paths: bars, points: { show: false } } : x.points ? { paths: () => null, points: { show: true, size: 5, width: 1, stroke: x.stroke, fill: x.fill || 'transparent' } } : { points: { show: false } }),
        })),
      ],
      hooks: {
        drawClear: [(u) => this.under && this.under(u, u.ctx)],
        draw: [(u) => this.overlay && this.overlay(u, u.ctx)],
      },
    };
  }

  /** data: [xs, ys…]; null removes the chart. */
  update(data) {
    if (!data) {
      if (this.u) this.u.destroy();
      this.u = null;
      return;
    }
    // uPlot keeps the x range of its first data across setData here (seen:
    // a second Monte Carlo run of another design drew its histograms outside
    // the old range, so the charts were empty); a chart whose x extent
    // changes is made again, the rest only take the new data.
    const xs = data[0];
    const extent = xs.length ? `${xs[0]}|${xs[xs.length - 1]}` : '';
    if (this.u && extent !== this.extent) {
      this.u.destroy();
      this.u = null;
    }
    this.extent = extent;
    if (!this.u) this.u = new uPlot({ ...this.options(), ...this.size() }, data, this.box);
    else this.u.setData(data);
  }
}

/** Draws a marker (ring and label) at data point (x, y). */
export function markPoint(u, ctx, x, y, label) {
  if (x == null || y == null) return;
  const px = u.valToPos(x, 'x', true);
  const py = u.valToPos(y, 'y', true);
  if (!Number.isFinite(px) || !Number.isFinite(py)) return;
  const r = devicePixelRatio;
  ctx.save();
  ctx.strokeStyle = AID_COLOURS.marker;
  ctx.fillStyle = AID_COLOURS.marker;
  ctx.lineWidth = 2 * r;
  ctx.beginPath();
  ctx.arc(px, py, 5 * r, 0, 2 * Math.PI);
  ctx.stroke();
  if (label) {
    ctx.font = `${11 * r}px system-ui, sans-serif`;
    const w = ctx.measureText(label).width;
    const right = px + 8 * r + w > u.bbox.left + u.bbox.width;
    ctx.fillText(label, right ? px - 8 * r - w : px + 8 * r, py - 7 * r);
  }
  ctx.restore();
}

/** Draws a vertical dashed line at x with a label. */
export function markX(u, ctx, x, label) {
  if (x == null) return;
  const px = u.valToPos(x, 'x', true);
  if (!Number.isFinite(px) || px < u.bbox.left || px > u.bbox.left + u.bbox.width) return;
  const r = devicePixelRatio;
  ctx.save();
  ctx.strokeStyle = AID_COLOURS.marker;
  ctx.fillStyle = AID_COLOURS.marker;
  ctx.setLineDash([4 * r, 3 * r]);
  ctx.lineWidth = r;
  ctx.beginPath();
  ctx.moveTo(px, u.bbox.top);
  ctx.lineTo(px, u.bbox.top + u.bbox.height);
  ctx.stroke();
  if (label) {
    ctx.font = `${11 * r}px system-ui, sans-serif`;
    const w = ctx.measureText(label).width;
    const right = px + 4 * r + w > u.bbox.left + u.bbox.width;
    ctx.fillText(label, right ? px - 4 * r - w : px + 4 * r, u.bbox.top + 13 * r);
  }
  ctx.restore();
}

/** Runs one aid method in the worker; resolves with the result or throws an Error carrying the message. */
export async function callAid(engine, method, ...args) {
  const { response, ms } = await engine.call(method, ...args);
  if (!response || response.error) {
    const e = new Error((response && response.error && response.error.message) || `${method}: no answer`);
    e.key = response && response.error && response.error.key;
    throw e;
  }
  return { result: response.result, ms };
}

export { clear as clearBox };
