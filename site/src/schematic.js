// The schematic of the chosen stage, drawn as SVG with createElementNS in a
// plain style of our own: straight wires, zig-zag resistors, a three-lead
// transistor symbol with the arrow on the source. A p-type stage is the
// n-type picture mirrored top to bottom (labels stay upright); the signal
// source, CL and RL always return to their own ground symbols.

const NS = 'http://www.w3.org/2000/svg';
const H = 280;
const W = 340;

function el(name, attrs, parent) {
  const e = document.createElementNS(NS, name);
  for (const [k, v] of Object.entries(attrs)) e.setAttribute(k, String(v));
  if (parent) parent.appendChild(e);
  return e;
}

/**
 * Draws the stage into `svg` (an <svg> element), replacing what was there.
 * opts: {stage: 'cs'|'cg'|'sf', pol: 'n'|'p', load: 'r'|'active'|'diode', rs: Ω, rl: Ω or Infinity}
 * Returns where the operating point goes (see annotateSchematic), in the
 * picture's own coordinates: {nodes: {name: [x, y, anchor]}, current: [x, y] (text ending there), devices: {M1: [x, y], M2: [x, y]}}.
 */
export function drawSchematic(svg, opts) {
  while (svg.firstChild) svg.removeChild(svg.firstChild);
  const anchors = { nodes: {}, current: null, devices: {} };
  const pol = opts.pol === 'p' ? 'p' : 'n';
  const other = pol === 'n' ? 'p' : 'n';
  const Y = (y) => (pol === 'n' ? y : H - y);
  svg.setAttribute('viewBox', `0 0 ${W} ${H}`);
  svg.setAttribute('role', 'img');
  const title = el('title', {}, svg);
  title.textContent = describe(opts);
  const g = el('g', { class: 'sch' }, svg);

  const wire = (pts) => el('polyline', { points: pts.map(([x, y]) => `${x},${Y(y)}`).join(' '), class: 'w' }, g);
  const wireReal = (pts) => el('polyline', { points: pts.map(([x, y]) => `${x},${y}`).join(' '), class: 'w' }, g);
  const dot = (x, y) => el('circle', { cx: x, cy: Y(y), r: 2.6, class: 'dot' }, g);
  const label = (x, y, text, cls = 'lbl', anchor = 'start') => {
    const t = el('text', { x, y: Y(y) + 4, class: cls, 'text-anchor': anchor }, g);
    t.textContent = text;
    return t;
  };
  const ground = (x, yReal) => {
    wireReal([[x, yReal], [x, yReal + 6]]);
    el('line', { x1: x - 9, y1: yReal + 6, x2: x + 9, y2: yReal + 6, class: 'w' }, g);
    el('line', { x1: x - 5.5, y1: yReal + 10, x2: x + 5.5, y2: yReal + 10, class: 'w' }, g);
    el('line', { x1: x - 2, y1: yReal + 14, x2: x + 2, y2: yReal + 14, class: 'w' }, g);
  };
  // Vertical resistor between n-coordinates y1 < y2 at x.
  const resistorV = (x, y1, y2, name) => {
    const a = Y(y1);
    const b = Y(y2);
    const top = Math.min(a, b);
    const bot = Math.max(a, b);
    const len = bot - top;
    const body = Math.min(36, len - 12);
    const s = top + (len - body) / 2;
    const pts = [[x, top], [x, s]];
    for (let i = 0; i < 6; i++) pts.push([x + (i % 2 ? -6 : 6), s + (body * (i + 0.5)) / 6]);
    pts.push([x, s + body], [x, bot]);
    wireReal(pts);
    const t = el('text', { x: x + 11, y: (top + bot) / 2 + 4, class: 'lbl' }, g);
    t.textContent = name;
  };
  const resistorH = (x1, x2, yReal, name) => {
    const body = Math.min(30, x2 - x1 - 8);
    const s = x1 + (x2 - x1 - body) / 2;
    const pts = [[x1, yReal], [s, yReal]];
    for (let i = 0; i < 6; i++) pts.push([s + (body * (i + 0.5)) / 6, yReal + (i % 2 ? -5 : 5)]);
    pts.push([s + body, yReal], [x2, yReal]);
    wireReal(pts);
    const t = el('text', { x: (x1 + x2) / 2, y: yReal - 9, class: 'lbl', 'text-anchor': 'middle' }, g);
    t.textContent = name;
  };
  const capacitorDown = (x, yReal, name) => {
    // from the node at yReal down to a ground symbol
    wireReal([[x, yReal], [x, yReal + 14]]);
    el('line', { x1: x - 9, y1: yReal + 14, x2: x + 9, y2: yReal + 14, class: 'w thick' }, g);
    el('line', { x1: x - 9, y1: yReal + 20, x2: x + 9, y2: yReal + 20, class: 'w thick' }, g);
    wireReal([[x, yReal + 20], [x, yReal + 30]]);
    ground(x, yReal + 30);
    const t = el('text', { x: x + 12, y: yReal + 21, class: 'lbl' }, g);
    t.textContent = name;
  };
  const signalSource = (xNode, yNode, name) => {
    // Rsig from the source to the node, the source going down to ground.
    const yr = Y(yNode);
    const xs = 26;
    resistorH(xs, xNode, yr, 'Rsig');
    wireReal([[xs, yr], [xs, yr + 12]]);
    el('circle', { cx: xs, cy: yr + 24, r: 12, class: 'w' }, g);
    el('path', { d: `M${xs - 6},${yr + 24} q3,-7 6,0 t6,0`, class: 'w' }, g);
    wireReal([[xs, yr + 36], [xs, yr + 44]]);
    ground(xs, yr + 44);
    const t = el('text', { x: xs + 15, y: yr + 40, class: 'lbl small' }, g);
    t.textContent = name;
  };
  // Transistor: channel at cx, centre y (n-coordinates); terminals at x = cx+14,
  // y ∓ 30. sourceEnd says which end (in n-coordinates) is the source.
  const mosfet = (cx, y, type, sourceEnd, name, gateFrom) => {
    const tx = cx + 14;
    el('line', { x1: cx, y1: Y(y - 17), x2: cx, y2: Y(y + 17), class: 'w thick' }, g);
    el('line', { x1: cx - 7, y1: Y(y - 12), x2: cx - 7, y2: Y(y + 12), class: 'w' }, g);
    const gx = type === 'p' ? cx - 17 : cx - 7;
    if (type === 'p') el('circle', { cx: cx - 12, cy: Y(y), r: 4.2, class: 'w' }, g);
    wire([[gateFrom, y], [gx, y]]);
    wire([[cx, y - 12], [tx, y - 12], [tx, y - 30]]);
    wire([[cx, y + 12], [tx, y + 12], [tx, y + 30]]);
    const sy = sourceEnd === 'top' ? y - 12 : y + 12;
    // arrow on the source lead: out of the channel for n, into it for p
    const mid = cx + 8;
    const dir = type === 'n' ? 1 : -1;
    el('path', { d: `M${mid - 4 * dir},${Y(sy) - 4} L${mid + 4 * dir},${Y(sy)} L${mid - 4 * dir},${Y(sy) + 4} z`, class: 'arrow' }, g);
    const nameText = el('text', { x: tx + 8, y: Y(y) + 2, class: 'lbl dev' }, g);
    nameText.textContent = name;
    const typeText = el('text', { x: tx + 8, y: Y(y) + 14, class: 'lbl small' }, g);
    typeText.textContent = `${type}-type`;
    anchors.devices[name] = [tx + 8, Y(y) + 26];
    return { gateX: gateFrom, top: y - 30, bottom: y + 30, x: tx };
  };

  const stage = ['cs', 'cg', 'sf'].includes(opts.stage) ? opts.stage : 'cs';
  const load = stage === 'sf' && opts.load === 'diode' ? 'r' : opts.load || 'r';
  const col = 160;
  const topRail = 24;
  const botRail = 256;
  const railText = (y, isTop) => {
    const word = (pol === 'n') === isTop ? 'VDD' : '0 V';
    label(col + 70, y, word, 'lbl rail');
  };
  wire([[col - 40, topRail], [col + 60, topRail]]);
  wire([[col - 40, botRail], [col + 60, botRail]]);
  railText(topRail, true);
  railText(botRail, false);

  const outputLoad = (yOut) => {
    dot(col, yOut);
    const yr = Y(yOut);
    wireReal([[col, yr], [250, yr]]);
    const t = el('text', { x: 252, y: yr - 8, class: 'lbl node' }, g);
    t.textContent = 'out';
    anchors.nodes.out = [252, yr - 22, 'start'];
    el('circle', { cx: 250, cy: yr, r: 3, class: 'node-mark' }, g);
    capacitorDown(222, yr, 'CL');
    if (Number.isFinite(opts.rl)) {
      // AC-coupled RL: a coupling capacitor on the wire, then RL to ground.
      wireReal([[250, yr], [282, yr]]);
      el('line', { x1: 282, y1: yr - 8, x2: 282, y2: yr + 8, class: 'w thick' }, g);
      el('line', { x1: 288, y1: yr - 8, x2: 288, y2: yr + 8, class: 'w thick' }, g);
      wireReal([[288, yr], [316, yr], [316, yr + 8]]);
      const body = 30;
      const s = yr + 8;
      const pts = [[316, s]];
      for (let i = 0; i < 6; i++) pts.push([316 + (i % 2 ? -5 : 5), s + (body * (i + 0.5)) / 6]);
      pts.push([316, s + body], [316, s + body + 6]);
      wireReal(pts);
      ground(316, s + body + 6);
      const rt = el('text', { x: 322, y: s + body / 2 + 4, class: 'lbl' }, g);
      rt.textContent = 'RL';
    }
  };
  const inputNode = (x, y, side = 'above') => {
    dot(x, y);
    // placed in real coordinates so it stays clear of the wires when mirrored
    const t = el('text', side === 'right' ? { x: x + 8, y: Y(y) + 5, class: 'lbl node' } : { x: x + 2, y: Y(y) - 8, class: 'lbl node', 'text-anchor': 'middle' }, g);
    t.textContent = 'in';
    anchors.nodes.in = side === 'right' ? [x + 26, Y(y) + 5, 'start'] : [x + 2, Y(y) + 20, 'middle'];
  };
  const loadDevice = (yTopTerm, yBotTerm, sourceAtTop) => {
    // load / sink device of the given type between two terminals (n-coordinates)
    const y = (yTopTerm + yBotTerm) / 2;
    const type = stage === 'sf' ? pol : other;
    const m = mosfet(col - 14, y, type, sourceAtTop ? 'top' : 'bottom', 'M2', col - 60);
    wire([[col, yTopTerm], [col, y - 30]]);
    wire([[col, y + 30], [col, yBotTerm]]);
    return m;
  };

  if (stage === 'cs' || stage === 'cg') {
    // load between the top rail and out
    const yOut = 116;
    if (load === 'r') {
      resistorV(col, topRail, yOut, 'RD');
    } else {
      loadDevice(topRail, yOut, true);
      const yG = (topRail + yOut) / 2;
      if (load === 'diode') {
        // gate tied to drain
        wire([[col - 60, yG], [col - 60, yOut - 12], [col, yOut - 12]]);
        dot(col, yOut - 12);
      } else {
        label(col - 64, yG, 'VB', 'lbl', 'end');
        dot(col - 60, yG);
        anchors.nodes.bias = [col - 64, Y(yG) + 18, 'end'];
      }
    }
    outputLoad(yOut);
    anchors.current = [col - 6, Y(131) + 4];
    const m1 = mosfet(col - 14, 176, pol, 'bottom', 'M1', col - 76);
    wire([[col, yOut], [col, m1.top]]);
    if (stage === 'cs') {
      inputNode(col - 76, 176);
      signalSource(col - 76, 176, 'vsig');
      if (opts.rs > 0) {
        resistorV(col, m1.bottom, botRail, 'RS');
        dot(col, m1.bottom);
        anchors.nodes.src = [col - 6, Y(m1.bottom) + 4, 'end'];
      }
      else wire([[col, m1.bottom], [col, botRail]]);
    } else {
      label(col - 80, 176, 'VG', 'lbl', 'end');
      dot(col - 76, 176);
      anchors.nodes.gate = [col - 80, Y(176) + 18, 'end'];
      const yIn = 226;
      wire([[col, m1.bottom], [col, yIn]]);
      inputNode(col, yIn, 'right');
      wire([[col, yIn], [col - 40, yIn]]);
      signalSource(col - 40, yIn, 'vsig');
      if (opts.rs > 0) {
        resistorV(col, yIn, botRail, 'RS');
      } else {
        // the source node is biased by the signal source's DC level
        wire([[col, yIn], [col, yIn]]);
      }
    }
  } else {
    // source follower: drain to the top rail, load from out to the bottom rail
    const m1 = mosfet(col - 14, 76, pol, 'bottom', 'M1', col - 76);
    wire([[col, topRail], [col, m1.top]]);
    inputNode(col - 76, 76);
    signalSource(col - 76, 76, 'vsig');
    const yOut = 128;
    wire([[col, m1.bottom], [col, yOut]]);
    outputLoad(yOut);
    anchors.current = [col - 6, Y(117) + 4];
    if (load === 'r') {
      resistorV(col, yOut, botRail, 'RS');
    } else {
      loadDevice(yOut + 8, botRail, false);
      const yG = (yOut + 8 + botRail) / 2;
      label(col - 64, yG, 'VB', 'lbl', 'end');
      dot(col - 60, yG);
      anchors.nodes.bias = [col - 64, Y(yG) + 18, 'end'];
    }
  }
  return anchors;
}

const REGION_WORDS = { saturation: 'saturation', triode: 'triode', subthreshold: 'subthreshold', cutoff: 'cut off' };

/**
 * Writes the operating point on the drawn schematic: each node's DC voltage
 * beside it, M1's drain current on its branch (it flows from VDD, drawn at
 * the top, towards 0 V) and each transistor's region under its name. Only
 * text that changed is written, so a slider step costs a few text nodes.
 * fmt(value, digits, unit) formats a number; r is the result (null: none).
 */
export function annotateSchematic(svg, anchors, r, fmt) {
  let g = svg.querySelector('g.sch-op');
  if (!g) {
    g = el('g', { class: 'sch-op', 'aria-hidden': 'true' }, svg);
    g.texts = new Map();
  }
  const want = new Map();
  if (r && r.ok && anchors) {
    const nodes = r.nodes || {};
    for (const [name, [x, y, anchor]] of Object.entries(anchors.nodes)) {
      if (typeof nodes[name] === 'number') want.set(`node-${name}`, { x, y, anchor, cls: 'op-v', text: fmt(nodes[name], 3, 'V') });
    }
    if (anchors.current && r.op && typeof r.op.id === 'number') {
      want.set('current', { x: anchors.current[0], y: anchors.current[1], anchor: 'end', cls: 'op-i', text: `↓ ${fmt(Math.abs(r.op.id), 3, 'A')}` });
    }
    for (const [dev, op] of [['M1', r.op], ['M2', r.load_op]]) {
      const at = anchors.devices[dev];
      if (at && op && op.region) want.set(`region-${dev}`, { x: at[0], y: at[1], anchor: 'start', cls: `op-region region-${op.region}`, text: REGION_WORDS[op.region] || op.region });
    }
  }
  for (const [id, t] of g.texts) {
    if (!want.has(id)) {
      t.remove();
      g.texts.delete(id);
    }
  }
  for (const [id, w] of want) {
    let t = g.texts.get(id);
    if (!t) {
      t = el('text', { 'data-op': id }, g);
      g.texts.set(id, t);
    }
    const attrs = { x: w.x, y: w.y, 'text-anchor': w.anchor, class: `lbl ${w.cls}` };
    for (const [k, v] of Object.entries(attrs)) if (t.getAttribute(k) !== String(v)) t.setAttribute(k, String(v));
    if (t.textContent !== w.text) t.textContent = w.text;
  }
}

/** A sentence describing the drawn circuit, for the SVG title (screen readers). */
export function describe(opts) {
  const stageWord = { cs: 'common-source', cg: 'common-gate', sf: 'source-follower' }[opts.stage] || 'common-source';
  const loadWord = { r: 'resistor', active: 'current-source', diode: 'diode-connected' }[opts.load] || 'resistor';
  return `${opts.pol === 'p' ? 'p' : 'n'}-type ${stageWord} stage with a ${loadWord} load`;
}
