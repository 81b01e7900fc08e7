type Attrs = Record<string, string | boolean | undefined>;
type Child = Node | string | null | undefined | false;

/**
 * Makes an element with attributes and children. Text is always added as text nodes, never as
 * markup, so names and fields from a site record cannot inject elements.
 */
export function el<K extends keyof HTMLElementTagNameMap>(tag: K, attrs: Attrs = {}, ...children: Child[]): HTMLElementTagNameMap[K] {
  const node = document.createElement(tag);
  for (const [name, value] of Object.entries(attrs)) {
    if (value === undefined || value === false) continue;
    node.setAttribute(name, value === true ? '' : value);
  }
  for (const child of children) {
    if (child === null || child === undefined || child === false) continue;
    node.append(child);
  }
  return node;
}

/** Waits until the browser has had a chance to paint, so a status line shows before heavy work starts. */
export function nextPaint(): Promise<void> {
  return new Promise((resolve) => requestAnimationFrame(() => setTimeout(resolve, 0)));
}
