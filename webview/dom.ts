// The small DOM builders both webviews use. Text goes in as text nodes only (never markup), and SVG
// gets attributes only: the content security policy allows no inline style.
const SVG = 'http://www.w3.org/2000/svg';

/** What an element may be given as children; null, undefined and false are left out. */
export type Child = Node | string | null | undefined | false;

/** An HTML element with an optional class and children. */
export function el<K extends keyof HTMLElementTagNameMap>(tag: K, className?: string, ...children: Child[]): HTMLElementTagNameMap[K] {
  const node = document.createElement(tag);
  if (className) node.className = className;
  for (const child of children) if (child !== null && child !== undefined && child !== false) node.append(child);
  return node;
}

/** An element the HTML tag map does not know (a web component), with attributes and text. */
export function custom(tag: string, attrs: Record<string, string> = {}, text?: string): HTMLElement {
  const node = document.createElement(tag);
  for (const [key, value] of Object.entries(attrs)) node.setAttribute(key, value);
  if (text !== undefined) node.textContent = text;
  return node;
}

/** An SVG element with attributes and optional text. */
export function svg<K extends keyof SVGElementTagNameMap>(tag: K, attrs: Record<string, string | number> = {}, text?: string): SVGElementTagNameMap[K] {
  const node = document.createElementNS(SVG, tag);
  for (const [key, value] of Object.entries(attrs)) node.setAttribute(key, String(value));
  if (text !== undefined) node.textContent = text;
  return node;
}
