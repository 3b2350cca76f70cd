// Downloads: the sweep as CSV, the result as JSON, a plot as PNG. Files are
// made in the page and offered through a Blob URL; nothing is sent anywhere.
import { exactSI } from './si.js';

export function download(blob, name) {
  const url = URL.createObjectURL(blob);
  const a = document.createElement('a');
  a.href = url;
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(url), 10000);
}

const cellText = (v) => (v === null || v === undefined ? '' : String(v));

/**
 * The frequency sweep and the noise densities as CSV (SI units, one row per
 * frequency; a noise column is empty where the noise sweep has no point).
 */
export function sweepCSV(r) {
  const ac = (r && r.ac) || {};
  const noise = (r && r.noise) || {};
  const rows = new Map();
  const put = (f, col, v) => {
    if (!rows.has(f)) rows.set(f, {});
    rows.get(f)[col] = v;
  };
  (ac.f || []).forEach((f, i) => {
    put(f, 'mag_db', ac.mag_db && ac.mag_db[i]);
    put(f, 'phase_deg', ac.phase_deg && ac.phase_deg[i]);
    put(f, 'zin_ohm', ac.zin && ac.zin[i]);
    put(f, 'zout_ohm', ac.zout && ac.zout[i]);
  });
  (noise.f || []).forEach((f, i) => {
    put(f, 'noise_out_v_per_rthz', noise.out && noise.out[i]);
    put(f, 'noise_in_v_per_rthz', noise.in && noise.in[i]);
  });
  const cols = ['mag_db', 'phase_deg', 'zin_ohm', 'zout_ohm', 'noise_out_v_per_rthz', 'noise_in_v_per_rthz'];
  const lines = [`# Stagewright sweep of design ${r && r.design ? r.design : ''}`, ['f_hz', ...cols].join(',')];
  for (const f of [...rows.keys()].sort((a, b) => a - b)) {
    const row = rows.get(f);
    lines.push([f, ...cols.map((c) => cellText(row[c]))].join(','));
  }
  return lines.join('\n') + '\n';
}

/**
 * The Sweep panel's table as CSV, in the columns of `stagewright sweep -csv`:
 * the swept input, each figure (one that is the input itself is not written
 * again), and last the reason a point has no result.
 */
export function figureSweepCSV(res, design = '') {
  const reasons = new Map();
  for (const f of res.failures || []) {
    const i = f.indexOf(': ');
    if (i > 0) reasons.set(f.slice(0, i), f.slice(i + 2));
  }
  const values = res.values || [];
  const same = (s) => values.every((v, i) => s.values[i] == null || Math.abs(s.values[i] - v) <= 1e-9 * Math.abs(v));
  const series = (res.series || []).filter((s) => s.name !== res.key || !same(s));
  const head = [res.key, ...series.map((s) => (s.name === res.key ? `${s.name} (figure)` : s.name)), 'error'];
  const quote = (t) => (/[",\n]/.test(t) ? `"${t.replace(/"/g, '""')}"` : t);
  const lines = [`# Stagewright sweep of ${res.key} for design ${design}`, head.map(quote).join(',')];
  values.forEach((v, i) => {
    lines.push([v, ...series.map((s) => cellText(s.values[i])), quote(reasons.get(`${res.key}=${exactSI(v)}`) || '')].join(','));
  });
  return lines.join('\n') + '\n';
}
