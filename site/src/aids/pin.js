// "Pin as reference": the present design pinned (key pin, so a link carries
// it), its frequency response drawn under the present one, and an A/B table.
import { panel, note, table, num, h, clear, AID_COLOURS, callAid } from './common.js';
import { splitFragment, joinFragment } from '../fragment.js';

/** The canonical fragment without its pin pair. */
export function withoutPin(fragment) {
  return joinFragment(splitFragment(fragment).filter(([k]) => k !== 'pin'));
}

export function pinPanel(ctx) {
  const p = panel('aid-pin', 'Pin as reference');
  const pinBtn = h('button', { type: 'button', id: 'pin-set', text: 'Pin this design' });
  const unpinBtn = h('button', { type: 'button', id: 'pin-clear', text: 'Unpin', disabled: true });
  p.head.append(h('span', { class: 'aid-buttons' }, pinBtn, unpinBtn));
  const state = h('p', { class: 'aid-note', id: 'pin-state' });
  const box = h('div', { id: 'pin-table' });
  const msg = note();
  p.body.append(state, box, msg);
  let pinned = null; // {fragment, ac}
  let hooked = null;

  pinBtn.addEventListener('click', () => ctx.edit([['pin', withoutPin(ctx.canonical())]]));
  unpinBtn.addEventListener('click', () => ctx.edit([['pin', null]]));

  // The pinned magnitude, drawn on the page's frequency-response plot by a
  // draw hook added to its uPlot instance (the plot itself is not changed).
  function drawPinned(u) {
    const ac = pinned && pinned.ac;
    if (!ac || !ac.f) return;
    const c = u.ctx;
    const r = devicePixelRatio;
    c.save();
    c.beginPath();
    c.rect(u.bbox.left, u.bbox.top, u.bbox.width, u.bbox.height);
    c.clip();
    c.strokeStyle = AID_COLOURS.pinned;
    c.lineWidth = 2 * r;
    c.setLineDash([2 * r, 3 * r]);
    c.beginPath();
    let pen = false;
    for (let i = 0; i < ac.f.length; i++) {
      const m = ac.mag_db[i];
      if (m == null) {
        pen = false;
        continue;
      }
      const x = u.valToPos(ac.f[i], 'x', true);
      const y = u.valToPos(m, 'db', true);
      if (pen) c.lineTo(x, y);
      else c.moveTo(x, y);
      pen = true;
    }
    c.stroke();
    c.font = `${11 * r}px system-ui, sans-serif`;
    c.fillStyle = '#5d6470';
    c.fillText('pinned (dotted grey)', u.bbox.left + 6 * r, u.bbox.top + u.bbox.height - 8 * r);
    c.restore();
  }

  // Adds the hook to the present plot instance (a new one after a design
  // without a result); redraws when asked, or when a pin is drawn on a plot
  // that did not have the hook. A plain new result needs no redraw: its own
  // setData draw runs the hook.
  function hookPlot(force = false) {
    const u = ctx.plots.ac && ctx.plots.ac.u;
    if (!u) return;
    let fresh = false;
    if (hooked !== u) {
      u.hooks.draw = u.hooks.draw || [];
      // The hooks may be the plot options' own arrays, shared by every
      // instance the plot makes: the hook goes in once.
      if (!u.hooks.draw.includes(drawPinned)) u.hooks.draw.push(drawPinned);
      hooked = u;
      fresh = Boolean(pinned && pinned.ac);
    }
    if (force || fresh) u.redraw(false, false);
  }

  return {
    section: p.section,
    show(values) {
      const pin = values('pin');
      unpinBtn.disabled = !pin;
      state.textContent = pin ? 'A design is pinned; the frequency response above shows it dotted grey, and the table compares the present design (A) with it (B).' : 'Nothing pinned. Pin the present design to compare later changes with it.';
    },
    async refresh(fragment, still, values) {
      msg.textContent = '';
      const pin = values('pin');
      if (!pin) {
        const had = pinned !== null;
        pinned = null;
        clear(box);
        hookPlot(had);
        return;
      }
      try {
        if (!pinned || pinned.fragment !== pin) {
          const { response } = await ctx.engine.call('evaluateMany', [pin]);
          const one = response.result && response.result[0];
          pinned = { fragment: pin, ac: one && one.result && one.result.ok ? one.result.ac : null };
        }
        const { result: cmp } = await callAid(ctx.engine, 'compare', fragment);
        if (!still()) return;
        hookPlot(true);
        clear(box);
        box.append(table('Present (A) against pinned (B)', ['figure', 'A (present)', 'B (pinned)', 'B − A', 'B − A, %'],
          cmp.rows.map((r) => [r.name, num(r.a, 4, r.unit), num(r.b, 4, r.unit), num(r.diff, 3, r.unit), r.diff_pct == null ? '—' : `${r.diff_pct >= 0 ? '+' : '−'}${Math.abs(r.diff_pct).toFixed(2)} %`]),
          { id: 'pin-compare' }));
      } catch (err) {
        if (!still()) return;
        clear(box);
        msg.textContent = `No comparison: ${err.message}`;
      }
    },
    /** Called after every evaluation, since the frequency plot may be new. */
    redraw: () => hookPlot(false),
  };
}
