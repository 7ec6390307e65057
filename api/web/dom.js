// dom.js: building elements without HTML strings (nothing from the API is ever parsed as
// markup), and the number and time formats the page shows.

const SVG_NS = 'http://www.w3.org/2000/svg';

// el('p', {class: 'x'}, 'text', child...): attributes, then text or element children.
export function el(tag, attributes = {}, ...children) {
  return build(document.createElement(tag), attributes, children);
}

export function svg(tag, attributes = {}, ...children) {
  return build(document.createElementNS(SVG_NS, tag), attributes, children);
}

function build(node, attributes, children) {
  for (const [name, value] of Object.entries(attributes)) {
    if (value === undefined || value === null || value === false) continue;
    if (name.startsWith('on')) node.addEventListener(name.slice(2), value);
    else node.setAttribute(name, value === true ? '' : String(value));
  }
  for (const child of children.flat()) {
    if (child === null || child === undefined || child === false) continue;
    node.append(child instanceof Node ? child : document.createTextNode(String(child)));
  }
  return node;
}

// Power in W as "840 W" or "3.25 kW".
export function formatWatts(watts) {
  const magnitude = Math.abs(watts);
  if (magnitude >= 1000) return `${(watts / 1000).toFixed(magnitude >= 10000 ? 1 : 2)} kW`;
  return `${Math.round(watts)} W`;
}

// Energy in kWh with sensible digits.
export function formatKwh(kwh) {
  const magnitude = Math.abs(kwh);
  const digits = magnitude >= 100 ? 0 : magnitude >= 10 ? 1 : 2;
  return `${kwh.toFixed(digits)} kWh`;
}

// Energy in Wh below a kWh ("340 Wh"), else as formatKwh.
export function formatWh(wh) {
  return Math.abs(wh) < 1000 ? `${Math.round(wh)} Wh` : formatKwh(wh / 1000);
}

// "12 s ago", "4 min ago", "3 h ago", "2 days ago".
export function formatAge(seconds) {
  if (seconds < 90) return `${Math.max(0, Math.round(seconds))} s ago`;
  if (seconds < 90 * 60) return `${Math.round(seconds / 60)} min ago`;
  if (seconds < 36 * 3600) return `${Math.round(seconds / 3600)} h ago`;
  return `${Math.round(seconds / 86400)} days ago`;
}

// Formats instants on the site's wall clock (not the browser's).
export function siteFormat(zone, options) {
  const format = new Intl.DateTimeFormat(undefined, { timeZone: zone, ...options });
  return (ms) => format.format(new Date(ms));
}
