// "Monte Carlo": samples and seed (keys mc, seed), Run with progress and
// Cancel, mean and σ of the figures, their histograms and the yield against
// the targets of the sizing panel (t.*).
import { panel, note, numberField, showField, table, num, h, clear, Chart, markX } from './common.js';
import { Job } from './job.js';

const QUANTITIES = [
  { key: 'gain', label: 'gain', unit: 'V/V' },
  { key: 'f3db', label: 'f3db', unit: 'Hz' },
  { key: 'id', label: 'ID', unit: 'A' },
  { key: 'vout', label: 'output level', unit: 'V' },
];

export function monteCarloPanel(ctx) {
  const p = panel('aid-mc', 'Monte Carlo');
  const samples = numberField('aid-mc-n', 'samples', '', (t) => ctx.edit([['mc', t]]), { size: 6, title: 'Number of samples, 1 … 10000 (key mc)' });
  const seed = numberField('aid-mc-seed', 'seed', '', (t) => ctx.edit([['seed', t]]), { size: 6, title: 'Seed of the random draws (key seed)' });
  const runBtn = h('button', { type: 'button', id: 'mc-run', text: 'Run' });
  const cancelBtn = h('button', { type: 'button', id: 'mc-cancel', text: 'Cancel', disabled: true });
  const bar = h('progress', { id: 'mc-progress', max: 1, value: 0, 'aria-label': 'Monte Carlo progress' });
  const progressText = h('span', { class: 'aid-progress-text', id: 'mc-progress-text', 'aria-live': 'polite' });
  const controls = h('div', { class: 'aid-controls' }, samples.wrap, seed.wrap, runBtn, cancelBtn, bar, progressText);
  const yieldLine = h('p', { class: 'aid-yield', id: 'mc-yield' });
  const stats = h('div', { id: 'mc-stats' });
  // Before the first run the histograms are hidden and one line says what
  // Run will do (empty chart frames said nothing).
  const hists = h('div', { class: 'aid-four', id: 'mc-hists', hidden: true });
  const before = h('p', { class: 'aid-note', id: 'mc-before' });
  const charts = QUANTITIES.map((q) => {
    const box = h('div', { class: 'plot aid-small', id: `mc-hist-${q.key}`, role: 'img', 'aria-label': `histogram of ${q.label}` });
    hists.appendChild(h('figure', { class: 'aid-figure' }, h('figcaption', { text: `${q.label} (${q.unit})` }), h('p', { class: 'aid-note aid-held-note', text: 'held by the bias: no spread beyond rounding' }), box));
    return { q, c: new Chart(box, { xLabel: q.unit, yLabel: 'samples', xUnit: q.unit === 'V/V' ? '' : q.unit, xDigits: 5, xSpace: 96, height: 170, bars: true, series: [{ label: 'count' }] }) };
  });
  const msg = note();
  p.body.append(
    controls,
    h('p', { class: 'aid-note', text: 'Global process shift and device mismatch (Pelgrom) of the design’s process (the base process’s spread unless the n.*/p.* spread keys set your own); runs only when you press Run. The yield counts the targets set under “Size to a spec”.' }),
    before, yieldLine, stats, hists, msg,
  );
  const job = new Job(ctx.engine, 'montecarloStart');

  function showResult(r, ms) {
    before.hidden = true;
    hists.hidden = false;
    const y = r.yield;
    clear(yieldLine);
    if (r.covered && r.covered.length) {
      yieldLine.append(h('strong', { text: `Yield ${y == null ? '—' : (100 * y).toFixed(1) + ' %'}` }), ` (${r.passed} of ${r.samples} samples meet ${r.covered.join(', ')})`);
      if (r.not_covered && r.not_covered.length) yieldLine.append(`; not counted per sample: ${r.not_covered.join(', ')}`);
    } else yieldLine.append('No yield: set targets under “Size to a spec”');
    yieldLine.append(`. ${r.samples} samples${r.canceled ? ' (cancelled)' : ''}, ${r.failed} without an operating point, in ${(ms / 1000).toFixed(2)} s.`);
    clear(stats);
    stats.append(table('', ['', 'mean', 'σ', 'σ/|mean|', 'min', 'max'], QUANTITIES.map((q) => {
      const s = r[q.key];
      const rel = s.mean ? Math.abs(s.sd / s.mean) : null;
      return [q.label, num(s.mean, 4, q.unit), num(s.sd, 3, q.unit), rel == null ? '—' : `${Number((100 * rel).toPrecision(3))} %`, num(s.min, 4, q.unit), num(s.max, 4, q.unit)];
    }), { id: 'mc-table' }));
    for (const { q, c } of charts) {
      const hst = r[q.key].hist;
      const st = r[q.key];
      // A figure the bias holds (ID in bias id) spreads only by the solver's
      // rounding; a histogram of that would mislead.
      c.box.parentNode.classList.toggle('aid-held', st.sd != null && st.mean != null && Math.abs(st.sd) <= 1e-9 * Math.abs(st.mean));
      if (hst.lo == null || hst.hi == null || c.box.parentNode.classList.contains('aid-held')) {
        c.update(null);
        continue;
      }
      const n = hst.counts.length;
      const w = (hst.hi - hst.lo) / n || 1;
      const xs = hst.counts.map((_, i) => hst.lo + (i + 0.5) * w);
      const mean = r[q.key].mean;
      c.overlay = (u, cx) => markX(u, cx, mean, 'mean');
      c.update([xs, hst.counts]);
    }
  }

  runBtn.addEventListener('click', async () => {
    if (job.running) return;
    runBtn.disabled = true;
    cancelBtn.disabled = false;
    msg.textContent = '';
    bar.value = 0;
    progressText.textContent = 'starting…';
    document.body.dataset.mcState = 'running';
    try {
      const { state, ms } = await job.run(ctx.canonical(), (done, total) => {
        bar.value = total ? done / total : 0;
        progressText.textContent = `${done} of ${total}`;
      });
      bar.value = 1;
      const r = state.result;
      progressText.textContent = `${r.samples} of ${state.total}${r.canceled ? ' (cancelled)' : ''}`;
      showResult(r, ms);
      document.body.dataset.mcMs = String(Math.round(ms));
      document.body.dataset.mcSamples = String(r.samples);
      document.body.dataset.mcState = r.canceled ? 'cancelled' : 'done';
    } catch (err) {
      progressText.textContent = '';
      msg.textContent = `Monte Carlo did not run: ${err.message}`;
      document.body.dataset.mcState = 'failed';
    } finally {
      runBtn.disabled = false;
      cancelBtn.disabled = true;
    }
  });
  cancelBtn.addEventListener('click', () => job.cancel());

  return {
    section: p.section,
    show(values) {
      showField(samples.input, values('mc'));
      showField(seed.input, values('seed'));
      before.textContent = `Run draws ${values('mc')} samples of the present design (seed ${values('seed')}) and shows the mean, spread and histogram of the gain, f3db, ID and output level, with the yield against the targets.`;
    },
    async refresh() {},
  };
}
