/** Tiny DOM helpers: escaping for HTML strings, and element lookup that fails loudly. */

export function esc(s: unknown): string {
  return String(s).replace(/[&<>"']/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', "'": '&#39;' })[c]!);
}

export function byId<T extends HTMLElement = HTMLElement>(id: string, root: ParentNode = document): T {
  const el = root.querySelector(`#${id}`);
  if (el === null) throw new Error(`missing #${id}`);
  return el as T;
}

export function qs<T extends Element = HTMLElement>(sel: string, root: ParentNode = document): T | null {
  return root.querySelector(sel) as T | null;
}
