// A small s-plane picture of the poles (×) and zeros (○). Both axes use a
// signed logarithmic scale, sign(x)·log10(1 + |x|/f0), because poles of one
// stage sit decades apart; f0 is a decade below the smallest root.
import { formatSI } from './si.js';
import { morph } from './dom.js';

const NS = 'http://www.w3.org/2000/svg';

function el(name, attrs, parent) {
  const e = document.createElementNS(NS, name);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
  if (parent) parent.appendChild(e);
  return e;
}

export function drawSPlane(svg, poles, zeros) {
  const W = 320;
  const H = 200;
  if (svg.getAttribute('viewBox') !== `0 0 ${W} ${H}`) svg.setAttribute('viewBox', `0 0 ${W} ${H}`);
  if (svg.getAttribute('role') !== 'img') svg.setAttribute('role', 'img');
  // built apart, then morphed in: a step that moves no root changes nothing
  const title = el('title', {}, null);
  title.textContent = `s-plane: ${poles.length} pole(s) marked ×, ${zeros.length} zero(s) marked ○`;
  const roots = [...poles, ...zeros].filter((r) => Number.isFinite(r.re) && Number.isFinite(r.im));
  const mags = roots.flatMap((r) => [Math.abs(r.re), Math.abs(r.im)]).filter((v) => v > 0);
  const f0 = mags.length ? Math.min(...mags) / 10 : 1;
  const t = (v) => Math.sign(v) * Math.log10(1 + Math.abs(v) / f0);
  const span = Math.max(1, ...roots.map((r) => Math.max(Math.abs(t(r.re)), Math.abs(t(r.im))))) * 1.12;
  const cx = W / 2;
  const cy = H / 2;
  const sx = (v) => cx + (t(v) / span) * (W / 2 - 14);
  const sy = (v) => cy - (t(v) / span) * (H / 2 - 14);
  const g = el('g', { class: 'splane' }, null);
  el('line', { x1: 8, y1: cy, x2: W - 8, y2: cy, class: 'ax' }, g);
  el('line', { x1: cx, y1: 8, x2: cx, y2: H - 8, class: 'ax' }, g);
  const lab = (x, y, s, anchor) => {
    const e = el('text', { x, y, class: 'lbl small', 'text-anchor': anchor }, g);
    e.textContent = s;
  };
  // Decade ticks on both axes, labelled where there is room (the scale is
  // logarithmic, so a tick's position says little without its value).
  const tick = (v, horizontal, last) => {
    const x = horizontal ? sx(v) : cx;
    const y = horizontal ? cy : sy(v);
    if (horizontal) el('line', { x1: x, y1: cy - 3, x2: x, y2: cy + 3, class: 'ax' }, g);
    else el('line', { x1: cx - 3, y1: y, x2: cx + 3, y2: y, class: 'ax' }, g);
    const room = horizontal ? Math.abs(x - last) >= 46 : Math.abs(y - last) >= 14;
    if (!room) return last;
    const text = `${v < 0 ? '−' : ''}${formatSI(Math.abs(v), 1, 'Hz').replace('\u2009', '')}`;
    if (horizontal) lab(x, cy + 12, text, 'middle');
    else lab(cx - 5, y + 3, text, 'end');
    return horizontal ? x : y;
  };
  for (const sign of [1, -1]) {
    let lastX = cx;
    let lastY = cy;
    for (let k = Math.ceil(Math.log10(f0 * 10)); t(10 ** k) <= span * 0.97 && k < 40; k++) {
      const v = sign * 10 ** k;
      lastX = tick(v, true, lastX);
      lastY = tick(v, false, lastY);
    }
  }
  lab(W - 10, cy + 24, 'σ/2π', 'end');
  lab(cx + 6, 18, 'jω/2π', 'start');
  lab(10, H - 8, '← stable (left half)', 'start');
  for (const p of poles) {
    if (!Number.isFinite(p.re) || !Number.isFinite(p.im)) continue;
    const x = sx(p.re);
    const y = sy(p.im);
    el('path', { d: `M${x - 5},${y - 5} L${x + 5},${y + 5} M${x - 5},${y + 5} L${x + 5},${y - 5}`, class: 'pole' }, g);
  }
  for (const z of zeros) {
    if (!Number.isFinite(z.re) || !Number.isFinite(z.im)) continue;
    el('circle', { cx: sx(z.re), cy: sy(z.im), r: 5, class: 'zero' }, g);
  }
  lab(W - 10, H - 8, `signed log scale, f0 = ${formatSI(f0, 2, 'Hz')}`, 'end');
  morph(svg, [title, g]);
}
