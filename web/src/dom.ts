// Element helpers shared by the page's modules.

type Child = Node | string | undefined | null | false;

/**
 * An element with properties (`class`, `text`, `dataset`, or any attribute; undefined and null are
 * left out) and children (undefined, null and false are left out).
 */
export function el<K extends keyof HTMLElementTagNameMap>(tag: K, props: Record<string, string | number | boolean | Record<string, string> | undefined | null> = {}, ...children: Child[]): HTMLElementTagNameMap[K] {
  const node = document.createElement(tag);
  for (const [k, v] of Object.entries(props)) {
    if (v === undefined || v === null) continue;
    if (k === 'class') node.className = String(v);
    else if (k === 'text') node.textContent = String(v);
    else if (k === 'dataset' && typeof v === 'object') Object.assign(node.dataset, v);
    else node.setAttribute(k, String(v));
  }
  node.append(...children.filter((c): c is Node | string => c !== undefined && c !== null && c !== false));
  return node;
}

/** The element matching `selector`; a missing one is a fault of the page itself, so it throws. */
export function $<T extends HTMLElement = HTMLElement>(selector: string, root: ParentNode = document): T {
  const found = root.querySelector<T>(selector);
  if (!found) throw new Error(`the page has no element ${selector}`);
  return found;
}

export function $all<T extends HTMLElement = HTMLElement>(selector: string, root: ParentNode = document): T[] {
  return [...root.querySelectorAll<T>(selector)];
}

export const input = (selector: string): HTMLInputElement => $<HTMLInputElement>(selector);
export const button = (selector: string): HTMLButtonElement => $<HTMLButtonElement>(selector);

/** Restarts the "just loaded" highlight of a form field. */
export function flashLoaded(field: HTMLElement | null): void {
  if (!field) return;
  field.classList.remove('loaded');
  void field.offsetWidth;
  field.classList.add('loaded');
}
