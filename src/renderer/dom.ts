// Small element builders for plain DOM views. Attributes go through setAttribute (never inline
// handlers: the page runs under a strict Content-Security-Policy); events through addEventListener.

export type Child = Node | string | number | null | undefined | false;
export type Attrs = Record<string, string | number | boolean | null | undefined>;

export const svgNS = 'http://www.w3.org/2000/svg';

function setAttrs(node: Element, attrs: Attrs): void {
  for (const [k, v] of Object.entries(attrs)) {
    if (v === null || v === undefined || v === false) continue;
    node.setAttribute(k, v === true ? '' : String(v));
  }
}

function append(node: Node, children: readonly (Child | readonly Child[])[]): void {
  for (const c of children.flat()) {
    if (c === null || c === undefined || c === false) continue;
    node.appendChild(typeof c === 'string' || typeof c === 'number' ? document.createTextNode(String(c)) : c);
  }
}

/** An HTML element with attributes and children (strings become text nodes; null and false are skipped). */
export function el<K extends keyof HTMLElementTagNameMap>(tag: K, attrs: Attrs = {}, ...children: (Child | readonly Child[])[]): HTMLElementTagNameMap[K] {
  const node = document.createElement(tag);
  setAttrs(node, attrs);
  append(node, children);
  return node;
}

/** An SVG element, likewise. */
export function svg<K extends keyof SVGElementTagNameMap>(tag: K, attrs: Attrs = {}, ...children: (Child | readonly Child[])[]): SVGElementTagNameMap[K] {
  const node = document.createElementNS(svgNS, tag);
  setAttrs(node, attrs);
  append(node, children);
  return node;
}

/** A type="button" button that calls onClick. */
export function button(attrs: Attrs, onClick: (e: MouseEvent) => void, ...children: (Child | readonly Child[])[]): HTMLButtonElement {
  const b = el('button', { type: 'button', ...attrs }, ...children);
  b.addEventListener('click', onClick);
  return b;
}

/** Replaces all children of a node. */
export function replaceChildren(node: Element, ...children: (Child | readonly Child[])[]): void {
  while (node.firstChild) node.removeChild(node.firstChild);
  append(node, children);
}
