// The design aids of the page: panels under the results that run the aid
// methods of the engine on the present design. Every setting of an aid is a
// key of the fragment, so the link restores it. The quick aids refresh
// REFRESH_MS after the last change; Monte Carlo and sizing only on their
// buttons.
import '../aids.css';
import { h } from '../dom.js';
import { fragmentMap, splitFragment, joinFragment } from '../fragment.js';
import { defaultText, relevant } from '../controls.js';
import { transferPanel } from './transfer.js';
import { chartsPanel } from './charts.js';
import { cornersPanel } from './corners.js';
import { monteCarloPanel } from './montecarlo.js';
import { sizingPanel } from './sizing.js';
import { sweepPanel } from './sweep.js';
import { pinPanel } from './pin.js';

export const REFRESH_MS = 300;

/**
 * host: {engine, plots, schema(), go(fragment)}; go loads a fragment as the
 * present design (the page evaluates it and calls update).
 */
export function startAids(host) {
  let canonical = '';
  let map = new Map();
  let timer = null;
  let generation = 0;

  const values = (key) => {
    if (map.has(key)) return map.get(key);
    const info = host.schema().find((k) => k.key === key);
    return info ? defaultText(info, map.get('stage')) : undefined;
  };
  const ctx = {
    engine: host.engine,
    plots: host.plots,
    canonical: () => canonical,
    go: (fragment) => host.go(fragment),
    /** Applies [key, text|null] changes (null removes the key) to the present design. */
    edit(changes) {
      let pairs = splitFragment(canonical);
      for (const [key, text] of changes) {
        const i = pairs.findIndex(([k]) => k === key);
        if (text === null) pairs = pairs.filter(([k]) => k !== key);
        else if (i >= 0) pairs[i] = [key, text];
        else pairs.push([key, text]);
      }
      host.go(joinFragment(pairs));
    },
  };
  const panels = [transferPanel(ctx), chartsPanel(ctx), sweepPanel(ctx), cornersPanel(ctx), monteCarloPanel(ctx), sizingPanel(ctx), pinPanel(ctx)];
  const order = ['aid-pin', 'aid-transfer', 'aid-charts', 'aid-sweep', 'aid-corners', 'aid-mc', 'aid-size'];
  const holder = h('div', { class: 'aids', id: 'aids' }, h('h2', { class: 'aids-title', text: 'Design aids' }));
  for (const id of order) holder.appendChild(panels.find((p) => p.section.id === id).section);
  document.querySelector('.results').appendChild(holder);

  async function refreshAll(fragment, gen) {
    const still = () => gen === generation;
    document.body.dataset.aids = 'busy';
    for (const p of panels) {
      if (!still()) return;
      await p.refresh(fragment, still, values);
    }
    if (still()) {
      document.body.dataset.aids = 'ready';
      document.body.dataset.aidsRefreshes = String(Number(document.body.dataset.aidsRefreshes || 0) + 1);
    }
  }

  return {
    /** Called by the page after every evaluation with a result. */
    update(result, fragment) {
      const pin = panels.find((p) => p.section.id === 'aid-pin');
      pin.redraw();
      if (!result || !result.ok || fragment === canonical) return;
      canonical = fragment;
      map = fragmentMap(fragment);
      const stage = map.get('stage');
      const rel = (key) => {
        const info = host.schema().find((k) => k.key === key);
        return !info || relevant(info, stage, map.get('load'), map.get('bias'));
      };
      for (const p of panels) p.show(values, rel, host.schema());
      clearTimeout(timer);
      const gen = ++generation;
      document.body.dataset.aids = 'waiting';
      timer = setTimeout(() => refreshAll(fragment, gen), REFRESH_MS);
    },
  };
}
