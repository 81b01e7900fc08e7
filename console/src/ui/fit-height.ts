/**
 * Sizes a tall box (the site grid, the map) to the window: from where it starts down to the
 * window's bottom, less `below` pixels for the lines under it, never under `min`. Toolbars wrap
 * to more lines on narrow windows, so a fixed height would push the notes under the box (or the
 * box itself) off screen at 1024 x 768. Refits on resize; call the returned function on show.
 */
export function fitHeightToWindow(box: HTMLElement, below: number, min = 220, property: 'height' | 'maxHeight' = 'height'): () => void {
  const fit = () => {
    if (!box.isConnected) return;
    const top = box.getBoundingClientRect().top + window.scrollY;
    box.style[property] = `${Math.max(min, Math.floor(window.innerHeight - top - below))}px`;
  };
  window.addEventListener('resize', fit);
  return fit;
}
