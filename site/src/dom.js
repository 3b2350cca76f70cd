// Tiny helpers to build elements with text only (never markup from strings),
// and to bring a live subtree up to date with a freshly built one while
// touching only what differs (so a slider step re-lays-out and repaints the
// few numbers that changed, not whole tables).

export function h(tag, attrs = {}, ...children) {
  const e = document.createElement(tag);
  for (const [k, v] of Object.entries(attrs)) {
    if (v === undefined || v === null || v === false) continue;
    if (k === 'class') e.className = v;
    else if (k === 'text') e.textContent = v;
    else if (k.startsWith('on') && typeof v === 'function') e.addEventListener(k.slice(2), v);
    else e.setAttribute(k, v === true ? '' : String(v));
  }
  for (const c of children.flat()) {
    if (c === null || c === undefined || c === false) continue;
    e.appendChild(typeof c === 'string' || typeof c === 'number' ? document.createTextNode(String(c)) : c);
  }
  return e;
}

export function clear(e) {
  while (e.firstChild) e.removeChild(e.firstChild);
  return e;
}

/** Sets a node's text only when it differs (an equal write still invalidates layout). */
export function setText(e, text) {
  if (e.textContent !== text) e.textContent = text;
}

// Attributes morph leaves alone: inline styles are set through the CSSOM by
// the renderers after the morph (the page's CSP allows no style attribute
// from markup, and none comes from h()).
const KEEP = new Set(['style']);

function sameKind(a, b) {
  return a.nodeType === b.nodeType && a.nodeName === b.nodeName && a.namespaceURI === b.namespaceURI;
}

function syncAttributes(live, fresh) {
  const want = fresh.attributes;
  for (let i = 0; i < want.length; i++) {
    const a = want[i];
    if (live.getAttribute(a.name) !== a.value) live.setAttribute(a.name, a.value);
  }
  const have = live.attributes;
  if (have.length === want.length) return; // every wanted one is there, so no extra
  for (let i = have.length - 1; i >= 0; i--) {
    const name = have[i].name;
    if (!KEEP.has(name) && !fresh.hasAttribute(name)) live.removeAttribute(name);
  }
}

/**
 * Makes the children of `box` equal to `fresh` (nodes built by h(), not in
 * the document): nodes of the same kind at the same place are kept and
 * patched (attributes, text), the rest replaced, extra ones removed.
 * Listeners of fresh nodes are not carried over, so morph is for content
 * without listeners (tables, notes, lists). Returns box.
 */
export function morph(box, fresh) {
  let live = box.firstChild;
  for (const f of fresh) {
    if (f === null || f === undefined || f === false) continue;
    if (!live) {
      box.appendChild(f);
      continue;
    }
    const next = live.nextSibling;
    if (!sameKind(live, f)) {
      box.replaceChild(f, live);
    } else if (f.nodeType === 3) {
      if (live.data !== f.data) live.data = f.data;
    } else {
      syncAttributes(live, f);
      morph(live, Array.from(f.childNodes));
    }
    live = next;
  }
  while (live) {
    const next = live.nextSibling;
    box.removeChild(live);
    live = next;
  }
  return box;
}
