// Downloads: the sweep as CSV, the result as JSON, a plot as PNG. Files are
// made in the page and offered through a Blob URL; nothing is sent anywhere.

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
