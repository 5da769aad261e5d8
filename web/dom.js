// One helper for building page elements, shared by the page's modules.

/**
 * An element with properties (`class`, `text`, `dataset`, or any attribute; undefined and null are
 * left out) and children (undefined and null are left out).
 * @param {string} tag
 * @param {Record<string, any>} [props]
 * @param {...(Node | string | undefined | null)} children
 */
export function el(tag, props = {}, ...children) {
  const node = document.createElement(tag);
  for (const [k, v] of Object.entries(props)) {
    if (v === undefined || v === null) continue;
    if (k === 'class') node.className = v;
    else if (k === 'text') node.textContent = v;
    else if (k === 'dataset') Object.assign(node.dataset, v);
    else node.setAttribute(k, v);
  }
  node.append(...children.filter((c) => c !== undefined && c !== null));
  return node;
}
