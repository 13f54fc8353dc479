// Tiny DOM helpers for the panel: elements built with textContent only (report text is user data, never HTML).

export type Child = Node | string | number | null | undefined | false | Child[];
export type Attrs = Record<string, string | number | boolean | null | undefined | ((ev: Event) => void)>;

function append(el: Element, c: Child): void {
  if (c === null || c === undefined || c === false) return;
  if (Array.isArray(c)) { for (const x of c) append(el, x); return; }
  el.append(typeof c === 'number' ? String(c) : c);
}

/** Create an element: attributes (strings, booleans; on* functions become listeners) and children. */
export function h<K extends keyof HTMLElementTagNameMap>(tag: K, attrs?: Attrs | null, ...children: Child[]): HTMLElementTagNameMap[K] {
  const el = document.createElement(tag);
  if (attrs) {
    for (const [k, v] of Object.entries(attrs)) {
      if (v === null || v === undefined || v === false) continue;
      if (typeof v === 'function') el.addEventListener(k.slice(2), v as EventListener);
      else if (v === true) el.setAttribute(k, '');
      else el.setAttribute(k, String(v));
    }
  }
  for (const c of children) append(el, c);
  return el;
}

const SVG_NS = 'http://www.w3.org/2000/svg';

/** A short line sample in the model's colour and dash pattern (legend swatch; no inline styles, CSP-safe). */
export function lineSwatch(color: string, dash: number[], width: number): SVGSVGElement {
  const svg = document.createElementNS(SVG_NS, 'svg');
  svg.setAttribute('class', 'cw-swatch');
  svg.setAttribute('width', '28');
  svg.setAttribute('height', '10');
  svg.setAttribute('viewBox', '0 0 28 10');
  svg.setAttribute('aria-hidden', 'true');
  const line = document.createElementNS(SVG_NS, 'line');
  line.setAttribute('x1', '1'); line.setAttribute('x2', '27');
  line.setAttribute('y1', '5'); line.setAttribute('y2', '5');
  line.setAttribute('stroke', color);
  line.setAttribute('stroke-width', String(Math.max(1.5, width)));
  if (dash.length) line.setAttribute('stroke-dasharray', dash.join(' '));
  svg.append(line);
  return svg;
}

/** A filled square swatch (bands, points). */
export function boxSwatch(fill: string, stroke?: string, round = false): SVGSVGElement {
  const svg = document.createElementNS(SVG_NS, 'svg');
  svg.setAttribute('class', 'cw-swatch');
  svg.setAttribute('width', '12');
  svg.setAttribute('height', '12');
  svg.setAttribute('viewBox', '0 0 12 12');
  svg.setAttribute('aria-hidden', 'true');
  const shape = document.createElementNS(SVG_NS, round ? 'circle' : 'rect');
  if (round) { shape.setAttribute('cx', '6'); shape.setAttribute('cy', '6'); shape.setAttribute('r', '4'); }
  else { shape.setAttribute('x', '1'); shape.setAttribute('y', '1'); shape.setAttribute('width', '10'); shape.setAttribute('height', '10'); }
  shape.setAttribute('fill', fill);
  if (stroke) { shape.setAttribute('stroke', stroke); shape.setAttribute('stroke-width', '1'); }
  svg.append(shape);
  return svg;
}

/** Replace the element's children with the given ones (strings, nodes, nested arrays; null/false skipped). */
export function setChildren(el: Element, ...children: Child[]): void {
  el.replaceChildren();
  for (const c of children) append(el, c);
}
